import { describe, expect, it } from 'vitest';
import { distance, type Vec3 } from '../../geometry/vector';
import { embeddedPosition, embedPoints, type Embedding } from './embedding';
import { buildOrganMesh } from './organ-mesh';
import { spherePhantom } from './testing/sphere-phantom';

const BARYCENTRIC =
  'barycentric coordinates of linear finite elements: Σλ = 1, x = Σλ·xᵢ, and they are ' +
  'invariant under affine maps (common practice)';

/** mulberry32, a small seeded generator (common practice); numbers in [0, 1). */
function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

describe('points embedded in the mesh', () => {
  const phantom = spherePhantom({ radiusMm: 25, spacingMm: [1, 1, 1] });
  const { mesh } = buildOrganMesh({
    labels: phantom.labels,
    geometry: phantom.geometry,
    organLabels: [1],
    resolution: 'coarse',
  });
  const tetCount = mesh.tets.length / 4;
  const random = seededRandom(7);
  const node = (index: number): Vec3 => [
    mesh.nodes[3 * index],
    mesh.nodes[3 * index + 1],
    mesh.nodes[3 * index + 2],
  ];
  // Points at random barycentric positions of random tets, and every node of the mesh.
  const inside: Vec3[] = Array.from({ length: 300 }, () => {
    const tet = Math.floor(random() * tetCount);
    const raw = [random(), random(), random(), random()];
    const sum = raw[0] + raw[1] + raw[2] + raw[3];
    const point: Vec3 = [0, 0, 0];
    raw.forEach((weight, v) => {
      const corner = node(mesh.tets[4 * tet + v]);
      for (let axis = 0; axis < 3; axis++) point[axis] += (weight / sum) * corner[axis];
    });
    return point;
  });
  const nodes = Array.from({ length: mesh.nodes.length / 3 }, (_, index) => node(index));
  const embeddings = embedPoints(mesh, [...inside, ...nodes]);

  it(`reproduces every point inside exactly: weights in [0, 1] summing to 1 (${BARYCENTRIC})`, () => {
    let worst = 0;
    [...inside, ...nodes].forEach((point, index) => {
      const embedding = embeddings[index] as Embedding;
      expect(embedding).not.toBeNull();
      const sum = embedding.weights.reduce((total, weight) => total + weight, 0);
      expect(sum).toBeCloseTo(1, 12);
      expect(Math.min(...embedding.weights)).toBeGreaterThanOrEqual(0);
      worst = Math.max(worst, distance(embeddedPosition(mesh.nodes, mesh, embedding), point));
    });
    expect(worst).toBeLessThan(1e-9);
  });

  it(`moves embedded points with the nodes: a translation and an affine map carry over exactly (${BARYCENTRIC})`, () => {
    const shift: Vec3 = [12.5, -40, 3.25];
    const translated = mesh.nodes.map((value, index) => value + shift[index % 3]);
    // x ↦ A·x + b with a general (sheared, scaled, rotated) A of positive determinant.
    const a = [
      [1.1, 0.2, -0.3],
      [0.1, 0.9, 0.25],
      [-0.2, 0.15, 1.3],
    ];
    const b: Vec3 = [-5, 7, 11];
    const affine = (p: Readonly<Vec3>): Vec3 =>
      [0, 1, 2].map(
        (row) => a[row][0] * p[0] + a[row][1] * p[1] + a[row][2] * p[2] + b[row],
      ) as Vec3;
    const mapped = new Float64Array(mesh.nodes.length);
    for (let index = 0; index < nodes.length; index++) mapped.set(affine(nodes[index]), 3 * index);
    inside.forEach((point, index) => {
      const embedding = embeddings[index] as Embedding;
      const moved = embeddedPosition(translated, mesh, embedding);
      expect(
        distance(moved, [point[0] + shift[0], point[1] + shift[1], point[2] + shift[2]]),
      ).toBeLessThan(1e-9);
      expect(distance(embeddedPosition(mapped, mesh, embedding), affine(point))).toBeLessThan(1e-9);
    });
  });

  it('answers null outside the mesh and clamps a point outside a boundary face by rounding only', () => {
    const { centreLps } = phantom;
    const far = [
      [30, 0, 0],
      [0, -30, 0],
      [0, 0, 26.5],
      [18, 18, 18],
      [500, 0, 0],
    ].map(([x, y, z]) => [centreLps[0] + x, centreLps[1] + y, centreLps[2] + z] as Vec3);
    expect(embedPoints(mesh, far)).toEqual(far.map(() => null));
    expect(embedPoints(mesh, [centreLps])[0]).not.toBeNull();

    // A boundary face's centroid pushed out along its normal: by 1e-12 of a cell it is still
    // on the face (clamped into its tet), by a hundredth of a cell it is outside.
    const [p, q, r] = [0, 1, 2].map((v) => node(mesh.boundaryFaces[v]));
    const u = [q[0] - p[0], q[1] - p[1], q[2] - p[2]];
    const v = [r[0] - p[0], r[1] - p[1], r[2] - p[2]];
    const normal = [
      u[1] * v[2] - u[2] * v[1],
      u[2] * v[0] - u[0] * v[2],
      u[0] * v[1] - u[1] * v[0],
    ];
    const length = Math.hypot(normal[0], normal[1], normal[2]);
    const pushed = (mm: number): Vec3 =>
      [0, 1, 2].map(
        (axis) => (p[axis] + q[axis] + r[axis]) / 3 + (normal[axis] / length) * mm,
      ) as Vec3;
    const [onFace, outside] = embedPoints(mesh, [
      pushed(1e-12 * mesh.cellMm),
      pushed(0.01 * mesh.cellMm),
    ]);
    expect(onFace).not.toBeNull();
    expect(Math.min(...(onFace as Embedding).weights)).toBeGreaterThanOrEqual(0);
    expect((onFace as Embedding).weights.reduce((sum, weight) => sum + weight, 0)).toBeCloseTo(
      1,
      14,
    );
    expect(outside).toBeNull();
  });
});
