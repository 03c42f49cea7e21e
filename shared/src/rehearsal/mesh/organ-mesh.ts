/**
 * The organ's tetrahedral mesh from a label map: a lattice of voxel-aligned cells over the
 * organ, each split into 6 Kuhn tets, cut to the organ's surface by isosurface stuffing (nodes
 * near the surface warped onto it, the other crossings cut), and the warping undone wherever
 * it spoiled a tet. See README.md for the method, its sources and why it is not the plainer
 * "keep half-full cells and snap their boundary" first tried.
 */
import { maxLabelValue } from '../../api/structures';
import { EngineRefusal } from '../../assessment/engine-refusal';
import { voxelCount, type VolumeGeometry } from '../../geometry/patient-geometry';
import { dot, type Vec3 } from '../../geometry/vector';
import {
  latticeNodeCounts,
  latticeNodePosition,
  layLattice,
  organBounds,
  voxelsPerCell,
} from './cell-lattice';
import { edgeRoot, findCutEdges, organCells, stuff } from './isosurface-stuffing';
import { boundaryFacesOf } from './mesh-faces';
import { meshQuality, tetShape, type MeshQuality } from './mesh-quality';
import { OrganDistance, type DistanceSampler } from './organ-distance';
import {
  DEFAULT_MESH_RESOLUTION,
  meshCellMm,
  meshResolutions,
  type MeshResolution,
  type TetMesh,
} from './tet-mesh';

export interface OrganMeshInput {
  /** Label values on the series grid, index i + nx·(j + ny·k). */
  labels: ArrayLike<number>;
  /** The series grid, LPS millimetres; its directions orthonormal. */
  geometry: VolumeGeometry;
  /** The label values that together make the organ (e.g. the liver and the tumours in it). */
  organLabels: readonly number[];
  /** Cell size by name; 'medium' unless `cellMm` is given. */
  resolution?: MeshResolution;
  /** Nominal cell edge, millimetres; overrides `resolution`. */
  cellMm?: number;
}

export interface OrganMeshResult {
  mesh: TetMesh;
  quality: MeshQuality;
  repairs: { snappedNodesReverted: number; tetsRemoved: number };
}

/** Smallest and largest nominal cell edge accepted, millimetres. */
export const MIN_CELL_MM = 1;
export const MAX_CELL_MM = 50;
/** Largest number of organ cells meshed (6 tets each, or their pieces): bounds time and memory. */
export const MAX_MESH_CELLS = 400_000;
/** Largest lattice over the organ's extent, in cells. */
export const MAX_LATTICE_CELLS = 4_000_000;
/** Background voxels around the organ's bounds on which φ is computed. */
const FIELD_MARGIN_VOXELS = 2;
/** Largest box of voxels on which φ is computed (kept at 4 bytes a voxel). */
export const MAX_FIELD_VOXELS = 64_000_000;
/**
 * Longest-to-shortest edge of a cell accepted. A Kuhn tet of a box 1 × 1 × L has a smallest
 * dihedral angle of arctan(1/L): 14° at L = 4, below the 5° sliver limit past L ≈ 11.
 */
export const MAX_CELL_ELONGATION = 4;
/** Cut points are found to within this |φ|, in nominal cell edges. */
const ROOT_TOLERANCE_CELLS = 1e-5;
/**
 * Smallest volume a tet may keep, as a share of its cell's volume (a Kuhn tet holds 1/6): only
 * against flat and inverted tets — a small tet of good shape is a sound element, and the cut
 * pieces of a cell are smaller than its Kuhn tets by design.
 */
export const MIN_TET_CELL_SHARE = 1e-4;
/** Smallest dihedral angle a tet may keep, degrees: below it the tet is a sliver. */
export const MIN_DIHEDRAL_DEG = 5;
/** Largest departure of the directions from an orthonormal frame, as the assessment engine. */
const ORTHONORMAL_TOLERANCE = 1e-4;

/**
 * Meshes the organ made of `organLabels` in `labels` by isosurface stuffing on a lattice of
 * voxel-aligned cells (isosurface-stuffing.ts; README.md). Throws an `EngineRefusal`
 * ('invalid-input', naming the field) for input it cannot mesh: a label map that does not fit
 * the grid, a grid that is not orthonormal, no organ voxel, an organ that no lattice node lies
 * inside, a cell size out of range, too many cells or cells too elongated for the voxel spacing.
 */
export function buildOrganMesh(input: OrganMeshInput): OrganMeshResult {
  return meshOrgan(input, {
    minDihedralDeg: MIN_DIHEDRAL_DEG,
    minTetCellShare: MIN_TET_CELL_SHARE,
  });
}

/** What a tet must satisfy to be kept. */
export interface TetLimits {
  /** Smallest dihedral angle, degrees. */
  minDihedralDeg: number;
  /** Smallest volume, as a share of the volume of a cell. */
  minTetCellShare: number;
}

/** `buildOrganMesh` with other limits on the tets (for the tests of the repair). */
export function meshOrgan(input: OrganMeshInput, tetLimits: TetLimits): OrganMeshResult {
  const cellMm = checkInput(input);
  const { geometry } = input;
  const { spacingMm } = geometry;
  const isOrgan = organTest(input.labels, input.organLabels);
  const bounds = organBounds(geometry.dimensions, isOrgan);
  if (bounds === null) {
    refuse(
      'organLabels',
      `No voxel of the label map carries the organ's labels (${input.organLabels.join(', ')}).`,
    );
  }
  const perCell = voxelsPerCell(spacingMm, cellMm);
  const cellEdgesMm = perCell.map((count, axis) => count * spacingMm[axis]);
  const elongation = Math.max(...cellEdgesMm) / Math.min(...cellEdgesMm);
  if (elongation > MAX_CELL_ELONGATION) {
    refuse(
      'cellMm',
      `At this voxel spacing (${spacingMm.map((s) => s.toFixed(2)).join(' × ')} mm) ` +
        `cells of ${cellMm} mm become ${cellEdgesMm.map((e) => e.toFixed(1)).join(' × ')} mm, ` +
        `more than ${MAX_CELL_ELONGATION} times longer one way than another; ` +
        'choose a coarser mesh.',
    );
  }
  const lattice = layLattice(bounds, perCell);
  const latticeCells = lattice.cellCounts[0] * lattice.cellCounts[1] * lattice.cellCounts[2];
  if (latticeCells > MAX_LATTICE_CELLS) {
    refuse(
      'cellMm',
      `Cells of ${cellMm} mm over the organ's extent make a lattice of ${latticeCells} cells, ` +
        `more than the ${MAX_LATTICE_CELLS} a rehearsal meshes; choose a coarser mesh.`,
    );
  }

  // φ at every lattice node, then the cut points where the surface crosses an edge.
  const nodeCounts = latticeNodeCounts(lattice);
  const nodeCount = nodeCounts[0] * nodeCounts[1] * nodeCounts[2];
  // The field covers the organ's voxels and a margin of background: enough for every value
  // near the surface to be exact; beyond it a reading takes the margin's (positive) value.
  const low = bounds.low.map((value) => value - FIELD_MARGIN_VOXELS) as Vec3;
  const high = bounds.high.map((value) => value + FIELD_MARGIN_VOXELS) as Vec3;
  const boxVoxels = [0, 1, 2].reduce((product, axis) => product * (high[axis] - low[axis] + 3), 1);
  if (boxVoxels > MAX_FIELD_VOXELS) {
    refuse(
      'labels',
      `The organ spans ${Math.round(boxVoxels / 1e6)} million voxels, more than the ` +
        `${MAX_FIELD_VOXELS / 1e6} million a rehearsal reads; check the organ's labels.`,
    );
  }
  const distance = new OrganDistance({
    dimensions: geometry.dimensions,
    spacingMm,
    isOrgan,
    low,
    high,
  });
  const sample = (i: number, j: number, k: number) => distance.sample(i, j, k);
  const nodePhi = new Float64Array(nodeCount);
  for (let node = 0; node < nodeCount; node++) {
    nodePhi[node] = sample(...latticeNodePosition(lattice, node));
  }
  const cells = organCells(lattice, nodePhi);
  if (cells.length === 0) {
    refuse(
      'organLabels',
      `The organ holds no node of a ${cellMm} mm lattice; choose a finer mesh.`,
    );
  }
  if (cells.length > MAX_MESH_CELLS) {
    refuse(
      'cellMm',
      `Cells of ${cellMm} mm would make ${cells.length} cells, more than the ` +
        `${MAX_MESH_CELLS} a rehearsal meshes; choose a coarser mesh.`,
    );
  }
  const cuts = findCutEdges(lattice, cells, nodePhi);
  const cutShares = Float64Array.from(cuts.lower, (lower, cut) => {
    const upper = cuts.upper[cut];
    return edgeRoot(
      sample,
      latticeNodePosition(lattice, lower),
      latticeNodePosition(lattice, upper),
      nodePhi[lower],
      nodePhi[upper],
      ROOT_TOLERANCE_CELLS * cellMm,
    );
  });

  // Stuff, and un-warp the nodes of any tet that warping spoiled, until none is left.
  const toLps = indexToLps(geometry);
  const limits = {
    minVolumeMm3: tetLimits.minTetCellShare * cellEdgesMm[0] * cellEdgesMm[1] * cellEdgesMm[2],
    minDihedralRad: (tetLimits.minDihedralDeg * Math.PI) / 180,
  };
  const noWarp = new Uint8Array(nodeCount);
  let snappedNodesReverted = 0;
  for (;;) {
    const stuffed = stuff({ lattice, cells, nodePhi, cuts, cutShares, spacingMm, cellMm, noWarp });
    const tets = stuffed.tets;
    keepSurfaceTetsInside(stuffed.surfaceTets, stuffed.positions, sample, tets);
    const positions = toLps.apply(stuffed.positions);
    if (toLps.isLeftHanded) {
      // Positive in index space; a left-handed grid mirrors them.
      for (let t = 0; t < tets.length; t += 4) {
        [tets[t + 1], tets[t + 2]] = [tets[t + 2], tets[t + 1]];
      }
    }
    const tetArray = Uint32Array.from(tets);
    const fit = fitTets(positions, tetArray, limits);
    let unwarped = 0;
    fit.forEach((isFit, tet) => {
      if (isFit) return;
      for (let v = 0; v < 4; v++) {
        const node = tetArray[4 * tet + v];
        if (node < nodeCount && stuffed.warpedTo[node] >= 0 && !noWarp[node]) {
          noWarp[node] = 1;
          unwarped++;
        }
      }
    });
    snappedNodesReverted += unwarped;
    if (unwarped > 0) continue;
    const tetsRemoved = fit.reduce((count, isFit) => count + (isFit ? 0 : 1), 0);
    const mesh = compactMesh(positions, tetArray, fit, cellMm);
    if (mesh.tets.length === 0) {
      refuse('organLabels', 'No tetrahedron of the organ survived the mesh checks.');
    }
    return { mesh, quality: meshQuality(mesh), repairs: { snappedNodesReverted, tetsRemoved } };
  }
}

/**
 * Tets whose four corners all lie on the surface are kept when φ at their centroid is below 0
 * (a convex stretch of surface: the tet lies inside), appended to `tets`.
 */
function keepSurfaceTetsInside(
  surfaceTets: number[],
  positions: Float64Array,
  sample: DistanceSampler,
  tets: number[],
): void {
  for (let t = 0; t < surfaceTets.length; t += 4) {
    const centroid: Vec3 = [0, 0, 0];
    for (let v = 0; v < 4; v++) {
      for (let axis = 0; axis < 3; axis++)
        centroid[axis] += positions[3 * surfaceTets[t + v] + axis] / 4;
    }
    if (sample(...centroid) < 0) tets.push(...surfaceTets.slice(t, t + 4));
  }
}

/** 1 for each tet with more than the smallest volume and no dihedral angle below the limit. */
function fitTets(
  positions: Float64Array,
  tets: Uint32Array,
  limits: { minVolumeMm3: number; minDihedralRad: number },
): Uint8Array {
  const fit = new Uint8Array(tets.length / 4);
  for (let tet = 0; tet < fit.length; tet++) {
    const t = 4 * tet;
    const shape = tetShape(positions, tets[t], tets[t + 1], tets[t + 2], tets[t + 3]);
    if (shape.volumeMm3 > limits.minVolumeMm3 && shape.minDihedralRad >= limits.minDihedralRad) {
      fit[tet] = 1;
    }
  }
  return fit;
}

function refuse(field: string, message: string): never {
  throw new EngineRefusal('invalid-input', field, message);
}

/** Checks the input and answers the nominal cell edge, millimetres. */
function checkInput(input: OrganMeshInput): number {
  const { geometry, labels, organLabels } = input;
  const { dimensions, spacingMm, originLps, direction } = geometry;
  if (dimensions.length !== 3 || !dimensions.every((n) => Number.isInteger(n) && n >= 1)) {
    refuse('geometry.dimensions', 'The grid dimensions must be 3 positive whole numbers.');
  }
  if (spacingMm.length !== 3 || !spacingMm.every((s) => s > 0 && Number.isFinite(s))) {
    refuse('geometry.spacingMm', 'The voxel spacing must be 3 positive finite numbers (mm).');
  }
  if (originLps.length !== 3 || !originLps.every((x) => Number.isFinite(x))) {
    refuse('geometry.originLps', 'The grid origin must be 3 finite numbers (LPS, mm).');
  }
  const isVector = (v: Vec3) => v.length === 3 && v.every((x) => Number.isFinite(x));
  if (direction.length !== 3 || !direction.every(isVector)) {
    refuse('geometry.direction', 'The grid directions must be 3 vectors of 3 finite numbers.');
  }
  for (let a = 0; a < 3; a++) {
    for (let b = a; b < 3; b++) {
      if (Math.abs(dot(direction[a], direction[b]) - (a === b ? 1 : 0)) > ORTHONORMAL_TOLERANCE) {
        refuse('geometry.direction', 'The grid directions must be perpendicular unit vectors.');
      }
    }
  }
  if (labels.length !== voxelCount(dimensions)) {
    refuse(
      'labels',
      `The label map holds ${labels.length} voxels; the grid (${dimensions.join(' × ')}) ` +
        `has ${voxelCount(dimensions)}.`,
    );
  }
  if (organLabels.length === 0) refuse('organLabels', 'Name at least one label of the organ.');
  organLabels.forEach((value, index) => {
    if (!Number.isInteger(value) || value < 1 || value > maxLabelValue) {
      refuse(
        `organLabels[${index}]`,
        `A label value is a whole number from 1 to ${maxLabelValue}, not ${value}.`,
      );
    }
  });
  if (input.resolution !== undefined && !meshResolutions.includes(input.resolution)) {
    refuse('resolution', `The mesh resolution is one of ${meshResolutions.join(', ')}.`);
  }
  const cellMm = input.cellMm ?? meshCellMm[input.resolution ?? DEFAULT_MESH_RESOLUTION];
  if (!(cellMm >= MIN_CELL_MM && cellMm <= MAX_CELL_MM)) {
    refuse('cellMm', `The cell size is from ${MIN_CELL_MM} to ${MAX_CELL_MM} mm, not ${cellMm}.`);
  }
  return cellMm;
}

/** Whether the label at a voxel index belongs to the organ, by a table of label values. */
function organTest(labels: ArrayLike<number>, organLabels: readonly number[]) {
  const table = new Uint8Array(Math.max(...organLabels) + 1);
  for (const value of organLabels) table[value] = 1;
  return (voxel: number): boolean => table[labels[voxel]] === 1;
}

/**
 * The map from voxel index space to LPS (P = S + X·Δi·i + Y·Δj·j + Z·Δk·k, DICOM PS3.3
 * C.7.6.2.1.1) over packed positions, and whether it mirrors (a left-handed grid).
 */
function indexToLps(geometry: VolumeGeometry) {
  const [x, y, z] = geometry.direction;
  const [si, sj, sk] = geometry.spacingMm;
  const origin = geometry.originLps;
  const handedness = dot(x, [
    y[1] * z[2] - y[2] * z[1],
    y[2] * z[0] - y[0] * z[2],
    y[0] * z[1] - y[1] * z[0],
  ]);
  return {
    isLeftHanded: handedness < 0,
    apply(indexNodes: Float64Array): Float64Array {
      const lps = new Float64Array(indexNodes.length);
      for (let p = 0; p < indexNodes.length; p += 3) {
        const i = indexNodes[p] * si;
        const j = indexNodes[p + 1] * sj;
        const k = indexNodes[p + 2] * sk;
        for (let axis = 0; axis < 3; axis++) {
          lps[p + axis] = origin[axis] + x[axis] * i + y[axis] * j + z[axis] * k;
        }
      }
      return lps;
    },
  };
}

/** The kept tets over the nodes they use, renumbered in their original order. */
function compactMesh(
  positions: Float64Array,
  tets: Uint32Array,
  keptTets: Uint8Array,
  cellMm: number,
): TetMesh {
  const newIndex = new Int32Array(positions.length / 3).fill(-1);
  const keptCount = keptTets.reduce((sum, flag) => sum + flag, 0);
  const newTets = new Uint32Array(4 * keptCount);
  let written = 0;
  keptTets.forEach((flag, tet) => {
    if (!flag) return;
    for (let v = 0; v < 4; v++) newTets[written++] = tets[4 * tet + v];
  });
  // Renumber nodes in ascending order of their old index.
  for (const node of newTets) newIndex[node] = 1;
  let nodeCount = 0;
  newIndex.forEach((flag, node) => {
    if (flag === 1) newIndex[node] = nodeCount++;
  });
  const nodes = new Float64Array(3 * nodeCount);
  newIndex.forEach((to, from) => {
    if (to >= 0) nodes.set(positions.subarray(3 * from, 3 * from + 3), 3 * to);
  });
  for (let p = 0; p < newTets.length; p++) newTets[p] = newIndex[newTets[p]];
  return { nodes, tets: newTets, boundaryFaces: boundaryFacesOf(newTets, nodeCount), cellMm };
}
