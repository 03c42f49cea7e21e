import { describe, expect, it } from 'vitest';
import { latticeTets, type CellLattice } from './cell-lattice';
import { KUHN_CELL_TETS, cellCornerOffset } from './kuhn-split';
import { boundaryFacesOf, meshFaces } from './mesh-faces';
import { TET_OUTWARD_FACES, tetSignedVolume } from './tet-mesh';

const KUHN = 'Kuhn, IBM J Res Dev 1960;4:518; Freudenthal, Ann Math 1942;43:580 (from memory)';

/** A lattice of `counts` cells with edges `edges` (index units scaled by hand below). */
function block(counts: [number, number, number]): CellLattice {
  return { start: [0.5, 0.5, 0.5], voxelsPerCell: [1, 1, 1], cellCounts: counts };
}

/** Nodes scaled per axis: a box cell of edges a × b × c. */
function scaled(nodes: Float64Array, edges: [number, number, number]): Float64Array {
  return nodes.map((value, index) => value * edges[index % 3]);
}

describe('Kuhn split of a cell', () => {
  it(`cuts a box into 6 positive tets whose volumes sum exactly to the box's (${KUHN})`, () => {
    // Edges that are exact binary fractions: every product and sum below is exact.
    const edges: [number, number, number] = [2, 3, 5];
    const { nodes, tets } = latticeTets(block([1, 1, 1]));
    const positions = scaled(nodes, edges);
    expect(tets.length).toBe(24);
    const volumes = Array.from({ length: 6 }, (_, tet) =>
      tetSignedVolume(
        positions,
        tets[4 * tet],
        tets[4 * tet + 1],
        tets[4 * tet + 2],
        tets[4 * tet + 3],
      ),
    );
    // Each tet is det(e_a, e_b, e_c)·abc/6: one sixth of the box, and positive.
    for (const volume of volumes) expect(volume).toBe((2 * 3 * 5) / 6);
    expect(volumes.reduce((sum, volume) => sum + volume, 0)).toBe(30);
  });

  it('walks from corner 0 to corner 7 one axis at a time, each of the 6 axis orders once', () => {
    // The defining property of the Kuhn simplices of the cube (ibid.).
    const orders = new Set<string>();
    for (const tet of KUHN_CELL_TETS) {
      const sorted = [...tet].sort((a, b) => a - b);
      expect(sorted[0]).toBe(0);
      expect(sorted[3]).toBe(7);
      const steps = [sorted[1], sorted[2] ^ sorted[1], 7 ^ sorted[2]].map((bit) =>
        cellCornerOffset(bit).indexOf(1),
      );
      expect(new Set(steps).size).toBe(3);
      expect(sorted[2] & sorted[1]).toBe(sorted[1]);
      orders.add(steps.join());
    }
    expect(orders.size).toBe(6);
  });
});

describe('Kuhn lattice of a 3 × 3 × 3 block', () => {
  const { nodes, tets } = latticeTets(block([3, 3, 3]));
  const nodeCount = nodes.length / 3;
  const tetCount = tets.length / 4;
  const faces = meshFaces(tets, nodeCount);
  /** Whether all three corners of a face lie on one outer plane of the block (0 or 3). */
  const onOuterPlane = (face: number) =>
    [0, 1, 2].some((axis) =>
      [0, 3].some((plane) =>
        [0, 1, 2].every((corner) => nodes[3 * faces.faces[3 * face + corner] + axis] === plane),
      ),
    );

  it(`is conforming: every interior face is shared by exactly two tets, every boundary face by one (${KUHN})`, () => {
    expect(tetCount).toBe(27 * 6);
    expect(nodeCount).toBe(64);
    faces.useCounts.forEach((count, face) => {
      expect(count).toBe(onOuterPlane(face) ? 1 : 2);
    });
    // Two tets sharing a face see it with opposite orientations (they lie on opposite sides).
    faces.secondTet.forEach((second, face) => {
      if (second < 0) return;
      const corners = Array.from(faces.faces.subarray(3 * face, 3 * face + 3));
      const seen = TET_OUTWARD_FACES.map((local) => local.map((v) => tets[4 * second + v]));
      const match = seen.find((triple) => [...triple].sort().join() === [...corners].sort().join());
      expect(match).toBeDefined();
      const [a, b, c] = match as number[];
      const cyclic = [
        corners.join(),
        [corners[1], corners[2], corners[0]].join(),
        [corners[2], corners[0], corners[1]].join(),
      ];
      expect(cyclic).not.toContain([a, b, c].join());
    });
  });

  it('has every tet positive and a boundary of 2 triangles per outer cell face, outward', () => {
    for (let tet = 0; tet < tetCount; tet++) {
      const t = 4 * tet;
      expect(tetSignedVolume(nodes, tets[t], tets[t + 1], tets[t + 2], tets[t + 3])).toBeCloseTo(
        1 / 6,
        12,
      );
    }
    const boundary = boundaryFacesOf(tets, nodeCount);
    // 6 faces of the block × 9 cell faces × 2 triangles.
    expect(boundary.length / 3).toBe(6 * 9 * 2);
    // Outward: the normal by the right-hand rule points away from the block's centre
    // (1.5, 1.5, 1.5) — for a convex body, the same as away from the face's own tet.
    let areaTwice = 0;
    for (let face = 0; face < boundary.length / 3; face++) {
      const [a, b, c] = [0, 1, 2].map((v) => boundary[3 * face + v]);
      const p = (node: number, axis: number) => nodes[3 * node + axis];
      const u = [0, 1, 2].map((axis) => p(b, axis) - p(a, axis));
      const v = [0, 1, 2].map((axis) => p(c, axis) - p(a, axis));
      const normal = [
        u[1] * v[2] - u[2] * v[1],
        u[2] * v[0] - u[0] * v[2],
        u[0] * v[1] - u[1] * v[0],
      ];
      const outward = [0, 1, 2].map((axis) => p(a, axis) - 1.5);
      expect(
        normal[0] * outward[0] + normal[1] * outward[1] + normal[2] * outward[2],
      ).toBeGreaterThan(0);
      areaTwice += Math.hypot(normal[0], normal[1], normal[2]);
    }
    expect(areaTwice / 2).toBeCloseTo(6 * 9, 12);
  });

  it('has the Euler characteristic of a ball, V − E + F − T = 1 (Euler–Poincaré formula)', () => {
    const edges = new Set<string>();
    for (let tet = 0; tet < tetCount; tet++) {
      for (let a = 0; a < 4; a++) {
        for (let b = a + 1; b < 4; b++) {
          const [p, q] = [tets[4 * tet + a], tets[4 * tet + b]].sort((x, y) => x - y);
          edges.add(`${p},${q}`);
        }
      }
    }
    expect(nodeCount - edges.size + faces.useCounts.length - tetCount).toBe(1);
  });
});
