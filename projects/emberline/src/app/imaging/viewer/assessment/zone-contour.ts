/**
 * The outline of an ablation zone on a slice view: the zone's voxel mask (on its own tight box
 * of the series grid) cut by the shown plane and contoured at half by marching squares, as
 * closed loops in patient LPS millimetres. Pure: the slice view projects the loops to screen
 * and draws them as SVG, solid or dashed by zone model.
 */
import { lpsToVoxel, vector3, voxelToLps, type Vec3, type VolumeGeometry } from '@emberline/shared';
import { gridPlaneNormal, type VoxelAxis } from '../slice-axes';

/** A zone mask on its grid: 1 inside, 0 outside, i fastest. */
export interface ZoneMask {
  geometry: VolumeGeometry;
  mask: Uint8Array;
}

/**
 * Segments of each marching-squares case, as pairs of cell edges (0 bottom, 1 right, 2 top,
 * 3 left) for corners c0 (a, b), c1 (a+1, b), c2 (a+1, b+1), c3 (a, b+1), case bit n set when
 * corner n is inside. The two saddles (5, 10) keep the inside corners apart, so that voxels
 * touching only at a corner outline separately (the zone's 4-connected reading; a display
 * choice).
 */
const caseSegments: readonly (readonly [number, number])[][] = [
  [],
  [[3, 0]],
  [[0, 1]],
  [[3, 1]],
  [[1, 2]],
  [
    [3, 0],
    [1, 2],
  ],
  [[0, 2]],
  [[3, 2]],
  [[2, 3]],
  [[0, 2]],
  [
    [0, 1],
    [2, 3],
  ],
  [[1, 2]],
  [[1, 3]],
  [[0, 1]],
  [[3, 0]],
  [],
];

/** An edge's midpoint in doubled cell coordinates (2u, 2v), relative to cell corner (a, b). */
const edgeOffsets: readonly (readonly [number, number])[] = [
  [1, 0],
  [2, 1],
  [1, 2],
  [0, 1],
];

/**
 * The zone's outline on the slice of the plane through `planePointLps` with normal
 * `planeNormalLps`: closed loops of LPS points (the first point is not repeated at the end).
 * The zone's slice is found through LPS (`lpsToVoxel` on the zone's own grid), so a box offset
 * anywhere on the series grid lands where it belongs; the zone axis is the one whose grid
 * plane lies along the shown plane. Nothing when the plane misses the box.
 */
export function zoneContourOnPlane(
  zone: ZoneMask,
  planePointLps: Readonly<Vec3>,
  planeNormalLps: Readonly<Vec3>,
): Vec3[][] {
  const { geometry, mask } = zone;
  const axis = closestAxis(geometry, planeNormalLps);
  const slice = Math.round(lpsToVoxel(geometry, planePointLps)[axis]);
  const dimensions = geometry.dimensions;
  if (slice < 0 || slice >= dimensions[axis]) return [];
  const uAxis = ((axis + 1) % 3) as VoxelAxis;
  const vAxis = ((axis + 2) % 3) as VoxelAxis;
  const strides = [1, dimensions[0], dimensions[0] * dimensions[1]];
  const loops = marchingSquares(dimensions[uAxis], dimensions[vAxis], (u, v) => {
    const index = slice * strides[axis] + u * strides[uAxis] + v * strides[vAxis];
    return mask[index] !== 0;
  });
  return loops.map((loop) =>
    loop.map(([doubledU, doubledV]) => {
      const voxel: Vec3 = [0, 0, 0];
      voxel[axis] = slice;
      voxel[uAxis] = doubledU / 2;
      voxel[vAxis] = doubledV / 2;
      return voxelToLps(geometry, voxel);
    }),
  );
}

/**
 * The zone's outlines on planes `stepMm` apart across each of the given directions (LPS unit
 * normals), for the 3D view's ringed cage of a zone: each family runs along the zone axis
 * closest to its normal, the rings centred on the box. Loops as `zoneContourOnPlane` gives.
 */
export function zoneRings(
  zone: ZoneMask,
  stepMm: number,
  normalsLps: readonly Readonly<Vec3>[],
): Vec3[][] {
  const { geometry } = zone;
  const rings: Vec3[][] = [];
  for (const normal of normalsLps) {
    const axis = closestAxis(geometry, normal);
    const count = geometry.dimensions[axis];
    const step = Math.max(1, Math.round(stepMm / geometry.spacingMm[axis]));
    const first = Math.floor(((count - 1) % step) / 2);
    for (let slice = first; slice < count; slice += step) {
      const voxel: Vec3 = [0, 0, 0];
      voxel[axis] = slice;
      rings.push(
        ...zoneContourOnPlane(zone, voxelToLps(geometry, voxel), gridPlaneNormal(geometry, axis)),
      );
    }
  }
  return rings;
}

/** The voxel axis of the grid whose constant-index planes lie closest to the given plane. */
function closestAxis(geometry: VolumeGeometry, normalLps: Readonly<Vec3>): VoxelAxis {
  let best: VoxelAxis = 0;
  let bestCos = -1;
  for (const axis of [0, 1, 2] as const) {
    const cos = Math.abs(vector3.dot(gridPlaneNormal(geometry, axis), normalLps));
    if (cos > bestCos) {
      best = axis;
      bestCos = cos;
    }
  }
  return best;
}

/**
 * Marching squares at half on a binary image of nu × nv pixels, zeros all around it (so every
 * loop closes): loops of points in doubled pixel coordinates (2u, 2v) — edge midpoints, which
 * is where the half level crosses between a 0 and a 1 — with the points of straight runs
 * dropped.
 */
export function marchingSquares(
  nu: number,
  nv: number,
  isInside: (u: number, v: number) => boolean,
): [number, number][][] {
  const at = (u: number, v: number) => u >= 0 && v >= 0 && u < nu && v < nv && isInside(u, v);
  // Doubled coordinates run from −2 to 2nu (2nv): shifted by 2 they index a plain grid.
  const stride = 2 * nv + 5;
  const keyOf = (x: number, y: number) => (x + 2) * stride + (y + 2);
  const neighbours = new Map<number, number[]>();
  const link = (from: number, to: number) => {
    const list = neighbours.get(from);
    if (list) list.push(to);
    else neighbours.set(from, [to]);
  };
  for (let b = -1; b < nv; b++) {
    for (let a = -1; a < nu; a++) {
      const code =
        (at(a, b) ? 1 : 0) |
        (at(a + 1, b) ? 2 : 0) |
        (at(a + 1, b + 1) ? 4 : 0) |
        (at(a, b + 1) ? 8 : 0);
      for (const [first, second] of caseSegments[code]) {
        const p = keyOf(2 * a + edgeOffsets[first][0], 2 * b + edgeOffsets[first][1]);
        const q = keyOf(2 * a + edgeOffsets[second][0], 2 * b + edgeOffsets[second][1]);
        link(p, q);
        link(q, p);
      }
    }
  }
  const pointOf = (key: number): [number, number] => [
    Math.floor(key / stride) - 2,
    (key % stride) - 2,
  ];
  const visited = new Set<number>();
  const loops: [number, number][][] = [];
  for (const start of neighbours.keys()) {
    if (visited.has(start)) continue;
    // Every edge point touches exactly two segments (one in each cell beside the edge).
    const loop: [number, number][] = [];
    let previous = -1;
    let current = start;
    while (!visited.has(current)) {
      visited.add(current);
      loop.push(pointOf(current));
      const [first, second] = neighbours.get(current) ?? [];
      const next = first !== previous ? first : second;
      previous = current;
      current = next;
    }
    loops.push(withoutStraightRuns(loop));
  }
  return loops;
}

/** Drops the points lying on the straight line through their two neighbours (exact: integers). */
function withoutStraightRuns(loop: [number, number][]): [number, number][] {
  if (loop.length < 4) return loop;
  return loop.filter((point, index) => {
    const before = loop[(index + loop.length - 1) % loop.length];
    const after = loop[(index + 1) % loop.length];
    const cross =
      (point[0] - before[0]) * (after[1] - point[1]) -
      (point[1] - before[1]) * (after[0] - point[0]);
    return cross !== 0;
  });
}

/** Loops of screen points (CSS pixels) as one SVG path: `M x y L x y … Z` per loop. */
export function svgPathOfLoops(loops: readonly (readonly { x: number; y: number }[])[]): string {
  return loops
    .filter((loop) => loop.length >= 2)
    .map(
      (loop) =>
        'M' + loop.map((point) => `${point.x.toFixed(1)} ${point.y.toFixed(1)}`).join(' L') + ' Z',
    )
    .join(' ');
}
