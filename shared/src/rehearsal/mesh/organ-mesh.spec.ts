import { describe, expect, it } from 'vitest';
import { EngineRefusal } from '../../assessment/engine-refusal';
import type { VolumeGeometry } from '../../geometry/patient-geometry';
import { distance, type Vec3 } from '../../geometry/vector';
import { meshFaces, surfaceNodes } from './mesh-faces';
import { tetShape } from './mesh-quality';
import { buildOrganMesh, meshOrgan, MIN_DIHEDRAL_DEG } from './organ-mesh';
import { meshCellMm, type MeshResolution, type TetMesh } from './tet-mesh';
import { spherePhantom } from './testing/sphere-phantom';

const SPHERE_VOLUME = 'the sphere, V = 4/3 π r³';
const CHORD_SAG =
  'chord sag s = h²/(8R) of a chord h on a circle of radius R (elementary geometry)';

/** Every property the solver relies on, checked tet by tet and face by face. */
function expectSoundMesh(mesh: TetMesh): void {
  const nodeCount = mesh.nodes.length / 3;
  const { tets, nodes } = mesh;
  let unsound = 0;
  for (let t = 0; t < tets.length; t += 4) {
    const shape = tetShape(nodes, tets[t], tets[t + 1], tets[t + 2], tets[t + 3]);
    const isSound =
      shape.volumeMm3 > 0 && (shape.minDihedralRad * 180) / Math.PI >= MIN_DIHEDRAL_DEG;
    if (!isSound) unsound++;
  }
  expect(unsound).toBe(0);
  // Conforming: no face of three nodes is used by more than two tets.
  const faces = meshFaces(tets, nodeCount);
  expect(Math.max(...faces.useCounts)).toBeLessThanOrEqual(2);
  // Every boundary face points away from the fourth node of its tet.
  const boundary = new Set<string>();
  let inward = 0;
  faces.useCounts.forEach((count, face) => {
    if (count !== 1) return;
    const corners = Array.from(faces.faces.subarray(3 * face, 3 * face + 3));
    boundary.add([...corners].sort((a, b) => a - b).join());
    const tet = Array.from(tets.subarray(4 * faces.firstTet[face], 4 * faces.firstTet[face] + 4));
    const fourth = tet.find((node) => !corners.includes(node)) as number;
    const p = (node: number): Vec3 => [nodes[3 * node], nodes[3 * node + 1], nodes[3 * node + 2]];
    const [a, b, c] = corners.map(p);
    const u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
    const v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
    const normal = [
      u[1] * v[2] - u[2] * v[1],
      u[2] * v[0] - u[0] * v[2],
      u[0] * v[1] - u[1] * v[0],
    ];
    const away = p(fourth).map((x, axis) => a[axis] - x);
    if (!(normal[0] * away[0] + normal[1] * away[1] + normal[2] * away[2] > 0)) inward++;
  });
  expect(inward).toBe(0);
  // The returned boundary is exactly the faces used once, and closed: each directed edge of it
  // is met once in the opposite direction (an oriented closed surface).
  expect(mesh.boundaryFaces.length / 3).toBe(boundary.size);
  const directed = new Map<string, number>();
  let strays = 0;
  for (let f = 0; f < mesh.boundaryFaces.length; f += 3) {
    const corners = Array.from(mesh.boundaryFaces.subarray(f, f + 3));
    if (!boundary.has([...corners].sort((a, b) => a - b).join())) strays++;
    for (let e = 0; e < 3; e++) {
      const key = `${corners[e]},${corners[(e + 1) % 3]}`;
      directed.set(key, (directed.get(key) ?? 0) + 1);
    }
  }
  expect(strays).toBe(0);
  let unmatched = 0;
  for (const [key, count] of directed) {
    const [a, b] = key.split(',');
    if (directed.get(`${b},${a}`) !== count) unmatched++;
  }
  expect(unmatched).toBe(0);
}

/** Distances (mm) of the surface nodes from the sphere's surface. */
function surfaceDistancesMm(mesh: TetMesh, centre: Vec3, radiusMm: number): number[] {
  return Array.from(surfaceNodes(mesh), (node) => {
    const p: Vec3 = [mesh.nodes[3 * node], mesh.nodes[3 * node + 1], mesh.nodes[3 * node + 2]];
    return Math.abs(distance(p, centre) - radiusMm);
  });
}

describe('organ mesh of a voxelised sphere (r = 40 mm, 1 mm voxels)', () => {
  const phantom = spherePhantom({ radiusMm: 40, spacingMm: [1, 1, 1] });
  const exactMm3 = (4 / 3) * Math.PI * 40 ** 3;
  const resolutions: MeshResolution[] = ['coarse', 'medium', 'fine'];
  const results = resolutions.map((resolution) =>
    buildOrganMesh({
      labels: phantom.labels,
      geometry: phantom.geometry,
      organLabels: [1],
      resolution,
    }),
  );

  it(`matches ${SPHERE_VOLUME} within the bound from the ${CHORD_SAG} at 8, 6 and 4 mm, closer as cells shrink`, () => {
    // The surface nodes lie on the surface, so the boundary is a polyhedron inscribed in it
    // whose edges are at most a cell diagonal √3·h long; by the chord sag, no point of the
    // boundary lies deeper than 3h²/(8R), and the volume falls short by at most 3·that/R
    // = 9h²/(8R²): 4.5 %, 2.5 % and 1.1 %. The voxelised sphere's own surface is unbiased
    // (its voxels hold 4/3 π r³ within 0.01 %); half a percent is allowed either way for the
    // noise of its staircase.
    const errors = results.map((result) => result.quality.volumeMm3 / exactMm3 - 1);
    resolutions.forEach((resolution, index) => {
      const h = meshCellMm[resolution];
      expect(errors[index]).toBeGreaterThan(-((9 * h * h) / (8 * 40 * 40)) - 0.005);
      expect(errors[index]).toBeLessThan(0.005);
    });
    expect(Math.abs(errors[1])).toBeLessThan(Math.abs(errors[0]));
    expect(Math.abs(errors[2])).toBeLessThan(Math.abs(errors[1]));
    // The labelled voxels themselves, as a check of the phantom.
    const voxels = phantom.labels.reduce((sum, label) => sum + label, 0);
    expect(Math.abs(voxels / exactMm3 - 1)).toBeLessThan(1e-4);
  });

  it('puts the surface nodes within half a voxel of the sphere on average, none beyond half a voxel diagonal', () => {
    // The nodes sit where the interpolated signed distance of the voxel mask vanishes; the
    // voxelised surface runs between the last centre inside and the first outside, so it lies
    // within half a voxel diagonal (√3/2 mm) of the true sphere.
    for (const { mesh } of results) {
      const distances = surfaceDistancesMm(mesh, phantom.centreLps, 40);
      const mean = distances.reduce((sum, d) => sum + d, 0) / distances.length;
      expect(mean).toBeLessThan(0.5);
      expect(Math.max(...distances)).toBeLessThan(Math.sqrt(3) / 2);
    }
  });

  it('returns only positive, non-sliver tets, conforming, with a closed outward boundary', () => {
    for (const { mesh, quality } of results) {
      expectSoundMesh(mesh);
      expect(quality.minDihedralDeg).toBeGreaterThanOrEqual(MIN_DIHEDRAL_DEG);
      expect(quality.tetCount).toBe(mesh.tets.length / 4);
      expect(quality.nodeCount).toBe(mesh.nodes.length / 3);
    }
    // Finer cells, more of them: about (8/4)³ = 8 times as many tets at 4 mm as at 8 mm.
    expect(results[2].quality.tetCount / results[0].quality.tetCount).toBeGreaterThan(5);
    expect(results[2].quality.tetCount / results[0].quality.tetCount).toBeLessThan(10);
  });
});

describe('organ mesh and the orientation of the grid (DICOM PS3.3 C.7.6.2.1.1)', () => {
  const base = spherePhantom({ radiusMm: 20, spacingMm: [1, 1.25, 1.5] });
  const reference = buildOrganMesh({
    labels: base.labels,
    geometry: base.geometry,
    organLabels: [1],
    cellMm: 5,
  });

  it('gives a rotated grid the same mesh, rotated: same volume, nodes at R·x + t', () => {
    // Rotation by 30° about the axis (1, 2, 2)/3 (Rodrigues' formula), and a new origin.
    const axis: Vec3 = [1 / 3, 2 / 3, 2 / 3];
    const angle = Math.PI / 6;
    const rotate = (v: Vec3): Vec3 => {
      const [c, s] = [Math.cos(angle), Math.sin(angle)];
      const d = axis[0] * v[0] + axis[1] * v[1] + axis[2] * v[2];
      const k = [
        axis[1] * v[2] - axis[2] * v[1],
        axis[2] * v[0] - axis[0] * v[2],
        axis[0] * v[1] - axis[1] * v[0],
      ];
      return [0, 1, 2].map((a) => v[a] * c + k[a] * s + axis[a] * d * (1 - c)) as Vec3;
    };
    const origin: Vec3 = [-120.5, 33.25, 410];
    const geometry: VolumeGeometry = {
      ...base.geometry,
      originLps: origin,
      direction: base.geometry.direction.map(rotate) as [Vec3, Vec3, Vec3],
    };
    const rotated = buildOrganMesh({ labels: base.labels, geometry, organLabels: [1], cellMm: 5 });
    expect(rotated.quality.volumeMm3).toBeCloseTo(reference.quality.volumeMm3, 6);
    expect(rotated.mesh.tets).toEqual(reference.mesh.tets);
    for (let node = 0; node < reference.mesh.nodes.length / 3; node++) {
      const x = Array.from(reference.mesh.nodes.subarray(3 * node, 3 * node + 3)) as Vec3;
      const expected = rotate(x).map((value, a) => value + origin[a]);
      for (let a = 0; a < 3; a++)
        expect(rotated.mesh.nodes[3 * node + a]).toBeCloseTo(expected[a], 9);
    }
    expectSoundMesh(rotated.mesh);
  });

  it('keeps the tets positive and the boundary outward on a left-handed grid (Z = −X × Y)', () => {
    const geometry: VolumeGeometry = {
      ...base.geometry,
      direction: [base.geometry.direction[0], base.geometry.direction[1], [0, 0, -1]],
    };
    const mirrored = buildOrganMesh({ labels: base.labels, geometry, organLabels: [1], cellMm: 5 });
    expect(mirrored.quality.volumeMm3).toBeCloseTo(reference.quality.volumeMm3, 6);
    expectSoundMesh(mirrored.mesh);
  });
});

describe('organ mesh on other grids and organs', () => {
  it(`meshes a sphere on thick slices (0.8 × 0.8 × 2.5 mm) within the chord-sag bound of ${SPHERE_VOLUME}`, () => {
    const phantom = spherePhantom({ radiusMm: 40, spacingMm: [0.8, 0.8, 2.5] });
    const { mesh, quality } = buildOrganMesh({
      labels: phantom.labels,
      geometry: phantom.geometry,
      organLabels: [1],
      resolution: 'medium',
    });
    expectSoundMesh(mesh);
    // Cells of 8 × 8 × 2 voxels: 6.4 × 6.4 × 5 mm; the longest edge is their diagonal. The
    // voxelised sphere at 2.5 mm slices is within 0.5 % of 4/3 π r³ (checked below).
    const h = Math.hypot(6.4, 6.4, 5) / Math.sqrt(3);
    const exactMm3 = (4 / 3) * Math.PI * 40 ** 3;
    const voxelMm3 = phantom.labels.reduce((sum, label) => sum + label, 0) * 0.8 * 0.8 * 2.5;
    expect(Math.abs(voxelMm3 / exactMm3 - 1)).toBeLessThan(0.005);
    expect(quality.volumeMm3 / exactMm3 - 1).toBeGreaterThan(
      -((9 * h * h) / (8 * 40 * 40)) - 0.005,
    );
    expect(quality.volumeMm3 / exactMm3 - 1).toBeLessThan(0.005);
    // Within half a voxel of the sphere along the slices' normal on average.
    const distances = surfaceDistancesMm(mesh, phantom.centreLps, 40);
    expect(distances.reduce((sum, d) => sum + d, 0) / distances.length).toBeLessThan(1.25);
  });

  it('joins several labels into one organ and ignores the others', () => {
    // A sphere of label 3 with its upper half relabelled 5 (a tumour, say), and a second
    // sphere of label 7 far off: the organ is labels 3 and 5, the whole first sphere.
    const phantom = spherePhantom({ radiusMm: 15, spacingMm: [1, 1, 1], label: 3 });
    const [nx, ny, nz] = phantom.geometry.dimensions;
    const labels = new Uint8Array(nx * ny * (nz + 40));
    labels.set(phantom.labels);
    for (let index = 0; index < phantom.labels.length; index++) {
      if (labels[index] === 3 && Math.floor(index / (nx * ny)) > nz / 2) labels[index] = 5;
      if (phantom.labels[index] === 3 && index + nx * ny * 40 < labels.length) {
        labels[index + nx * ny * 40] = 7;
      }
    }
    const geometry: VolumeGeometry = { ...phantom.geometry, dimensions: [nx, ny, nz + 40] };
    const whole = buildOrganMesh({ labels, geometry, organLabels: [3, 5], cellMm: 4 });
    const single = buildOrganMesh({
      labels: phantom.labels,
      geometry: phantom.geometry,
      organLabels: [3],
      cellMm: 4,
    });
    expect(whole.quality.volumeMm3).toBeCloseTo(single.quality.volumeMm3, 3);
  });

  it('keeps every tet sound on irregular organs (seeded unions of balls with speckle)', () => {
    // mulberry32, a small seeded generator (common practice).
    const random = (seed: number) => {
      let state = seed >>> 0;
      return () => {
        state = (state + 0x6d2b79f5) >>> 0;
        let t = state;
        t = Math.imul(t ^ (t >>> 15), t | 1);
        t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
        return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
      };
    };
    const n = 56;
    const geometry: VolumeGeometry = {
      dimensions: [n, n, n],
      spacingMm: [1, 1, 1],
      originLps: [0, 0, 0],
      direction: [
        [1, 0, 0],
        [0, 1, 0],
        [0, 0, 1],
      ],
    };
    for (const [seed, cellMm] of [
      [2, 4],
      [5, 6],
    ]) {
      const next = random(seed);
      const balls = Array.from({ length: 10 }, () => [
        12 + 32 * next(),
        12 + 32 * next(),
        12 + 32 * next(),
        3 + 9 * next(),
      ]);
      const labels = new Uint8Array(n ** 3);
      let index = 0;
      for (let k = 0; k < n; k++) {
        for (let j = 0; j < n; j++) {
          for (let i = 0; i < n; i++, index++) {
            const isInBall = balls.some(
              ([x, y, z, r]) => (i - x) ** 2 + (j - y) ** 2 + (k - z) ** 2 <= r * r,
            );
            if (isInBall || next() < 0.02) labels[index] = 1;
          }
        }
      }
      const { mesh, quality } = buildOrganMesh({ labels, geometry, organLabels: [1], cellMm });
      expectSoundMesh(mesh);
      expect(quality.volumeMm3).toBeGreaterThan(0);
    }
  });

  it('un-warps the nodes of spoiled tets and removes what stays spoiled, under strict limits', () => {
    // Demanding 30° dihedral angles (the Kuhn tets of a cube have 45°; cut pieces often less)
    // makes the repair work hard: the result must still honour the limits everywhere.
    const phantom = spherePhantom({ radiusMm: 20, spacingMm: [1, 1, 1] });
    const strict = { minDihedralDeg: 30, minTetCellShare: 1e-3 };
    const input = {
      labels: phantom.labels,
      geometry: phantom.geometry,
      organLabels: [1],
      cellMm: 5,
    };
    const { mesh, repairs } = meshOrgan(input, strict);
    const relaxed = buildOrganMesh(input);
    expect(repairs.snappedNodesReverted).toBeGreaterThan(relaxed.repairs.snappedNodesReverted);
    expect(repairs.tetsRemoved).toBeGreaterThan(0);
    let spoiled = 0;
    for (let t = 0; t < mesh.tets.length; t += 4) {
      const shape = tetShape(
        mesh.nodes,
        mesh.tets[t],
        mesh.tets[t + 1],
        mesh.tets[t + 2],
        mesh.tets[t + 3],
      );
      const volumeShare = shape.volumeMm3 / 125;
      if (volumeShare <= 1e-3 || (shape.minDihedralRad * 180) / Math.PI < 30) spoiled++;
    }
    expect(spoiled).toBe(0);
    expect(meshFaces(mesh.tets, mesh.nodes.length / 3).useCounts.every((count) => count <= 2)).toBe(
      true,
    );
  });
});

describe('organ mesh input', () => {
  const phantom = spherePhantom({ radiusMm: 10, spacingMm: [1, 1, 1] });
  const refusal = (change: Partial<Parameters<typeof buildOrganMesh>[0]>): EngineRefusal => {
    try {
      buildOrganMesh({
        labels: phantom.labels,
        geometry: phantom.geometry,
        organLabels: [1],
        ...change,
      });
    } catch (error) {
      if (error instanceof EngineRefusal) return error;
      throw error;
    }
    throw new Error('no refusal');
  };

  it('refuses what it cannot mesh with a message naming the field (RFC 9457 problem upstream)', () => {
    expect(refusal({ labels: phantom.labels.subarray(1) }).field).toBe('labels');
    expect(refusal({ organLabels: [2] }).field).toBe('organLabels');
    expect(refusal({ organLabels: [] }).field).toBe('organLabels');
    expect(refusal({ organLabels: [0] }).field).toBe('organLabels[0]');
    expect(refusal({ cellMm: 0 }).field).toBe('cellMm');
    expect(refusal({ cellMm: Number.NaN }).field).toBe('cellMm');
    expect(refusal({ resolution: 'huge' as MeshResolution }).field).toBe('resolution');
    const skewed: VolumeGeometry = {
      ...phantom.geometry,
      direction: [
        [1, 0, 0],
        [0.6, 0.8, 0],
        [0, 0, 1],
      ],
    };
    expect(refusal({ geometry: skewed }).field).toBe('geometry.direction');
    // 0.25 mm pixels and 5 mm slices: 2 mm cells become 2 × 2 × 5 mm, elongation 2.5, accepted;
    // 1 mm cells become 1 × 1 × 5 mm, elongation 5, refused.
    const thick: VolumeGeometry = { ...phantom.geometry, spacingMm: [0.25, 0.25, 5] };
    const error = refusal({ geometry: thick, cellMm: 1 });
    expect(error.field).toBe('cellMm');
    expect(error.message).toContain('1.0 × 1.0 × 5.0 mm');
  });

  it('refuses an organ that holds no lattice node', () => {
    const labels = new Uint8Array(phantom.labels.length);
    labels[labels.length >> 1] = 1;
    const error = refusal({ labels });
    expect(error.field).toBe('organLabels');
    expect(error.message).toContain('finer');
  });
});
