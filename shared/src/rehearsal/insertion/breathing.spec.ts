import { describe, expect, it } from 'vitest';
import { EngineRefusal } from '../../assessment/engine-refusal';
import { blockMesh, nodesOnPlane } from '../fem/testing/block-mesh';
import { TissueSolver } from '../fem/tissue-solver';
import { embedPoints, embeddedPosition } from '../mesh/embedding';
import { surfaceNodes } from '../mesh/mesh-faces';
import type { TetMesh } from '../mesh/tet-mesh';
import {
  breathingBoundary,
  breathingOffsetMm,
  breathingPhase,
  diaphragmNodes,
  lujanPosition,
  resolveBreathing,
  surfaceNodeAreasMm2,
  timeAtPhase,
} from './breathing';
import { ellipsoidOrganMesh } from './testing/ellipsoid-organ';

const H = 0.02;

describe("Lujan's breathing curve z(t) = z0 − b·cos^(2n)(π·t/τ − φ) (Lujan et al., Med Phys 1999)", () => {
  // The formula written out here, independently of breathing.ts.
  const lujan = (t: number, z0: number, b: number, tau: number, n: number, phi: number) =>
    z0 - b * Math.cos((Math.PI * t) / tau - phi) ** (2 * n);

  it('lujanPosition is the formula, with its peak of inhalation at t = φ·τ/π', () => {
    for (const n of [1, 2, 3]) {
      for (const t of [0, 0.37, 1.9, 5.25]) {
        expect(
          lujanPosition(t, 7, { amplitudeMm: 12, periodS: 4, shapeN: n, phaseRad: 0.4 }),
        ).toBeCloseTo(lujan(t, 7, 12, 4, n, 0.4), 13);
      }
    }
    const p = resolveBreathing({ phaseRad: 0.4 });
    expect(lujanPosition((0.4 * 4) / Math.PI, 0, p)).toBeCloseTo(-12, 12);
    expect(breathingPhase((0.4 * 4) / Math.PI, p)).toBeCloseTo(0, 12);
    // Mid-exhalation's rest: cos = 0, z = z0, half a period later.
    const rest = timeAtPhase(0.5, p, 0);
    expect(lujanPosition(rest, 0, p)).toBeCloseTo(0, 12);
    expect(rest).toBeCloseTo((0.4 * 4) / Math.PI + 2, 12);
  });

  for (const n of [1, 2, 3]) {
    it(`drives the diaphragm's nodes exactly along the curve (n = ${n})`, () => {
      const mesh = blockMesh([3, 3, 3], [30, 30, 30]) as TetMesh;
      const boundary = breathingBoundary(mesh, {
        breathing: { amplitudeMm: 12, periodS: 4, shapeN: n, phaseRad: 0.3, anteriorFraction: 0.2 },
      });
      const solver = new TissueSolver(mesh, { timeStepS: H, boundary: boundary.boundary });
      const top = nodesOnPlane(mesh as ReturnType<typeof blockMesh>, 2, 30);
      expect([...boundary.diaphragmNodes]).toEqual(top);
      for (let step = 1; step <= 60; step++) {
        solver.step();
        const t = step * H;
        // n = 1 is a sinusoid: cos²u = (1 + cos 2u)/2, so z = z0 − b/2 − (b/2)·cos(2πt/τ − 2φ).
        const offsetMm =
          n === 1 ? -6 - 6 * Math.cos((2 * Math.PI * t) / 4 - 0.6) : lujan(t, 0, 12, 4, n, 0.3);
        for (const node of top) {
          const z = solver.positionsM[3 * node + 2] * 1000;
          const y = solver.positionsM[3 * node + 1] * 1000;
          expect(z).toBeCloseTo(mesh.nodes[3 * node + 2] + offsetMm, 10);
          // Anteriorly (−y in LPS) by 0.2 mm per mm inferiorly.
          expect(y).toBeCloseTo(mesh.nodes[3 * node + 1] + 0.2 * offsetMm, 10);
          expect(solver.positionsM[3 * node] * 1000).toBeCloseTo(mesh.nodes[3 * node], 10);
        }
      }
    });
  }

  it('puts zero displacement at the imaged state (exhale or inhale), and holds the breath', () => {
    const exhale = resolveBreathing({ imagedAt: 'exhale' });
    const inhale = resolveBreathing({ imagedAt: 'inhale' });
    const peak = 0; // φ = 0: the peak of inhalation at t = 0
    expect(breathingOffsetMm(peak, exhale)[2]).toBeCloseTo(-12, 12);
    expect(breathingOffsetMm(peak, inhale)[2]).toBeCloseTo(0, 12);
    expect(breathingOffsetMm(2, exhale)[2]).toBeCloseTo(0, 12);
    expect(breathingOffsetMm(2, inhale)[2]).toBeCloseTo(12, 12);
    const mesh = blockMesh([2, 2, 2], [20, 20, 20]) as TetMesh;
    const held = breathingBoundary(mesh, { holdFromS: 1 });
    expect(held.offsetMm(3)).toEqual(held.offsetMm(1));
    expect(held.offsetMm(0.5)[2]).toBeCloseTo(lujan(0.5, 0, 12, 4, 2, 0), 12);
  });
});

describe('the liver held by its surroundings and the abdominal wall', () => {
  it('shares the surface among its nodes: the areas sum to the box 2(ab + bc + ca)', () => {
    const mesh = blockMesh([3, 4, 5], [30, 28, 45]) as TetMesh;
    const total = surfaceNodeAreasMm2(mesh).reduce((sum, area) => sum + area, 0);
    expect(total).toBeCloseTo(2 * (30 * 28 + 28 * 45 + 45 * 30), 9);
  });

  it('and on an ellipsoid to its area (Thomsen’s approximation, within 3 %)', () => {
    const [a, b, c] = [60, 45, 50];
    const mesh = ellipsoidOrganMesh([a, b, c], 10);
    const total = surfaceNodeAreasMm2(mesh).reduce((sum, area) => sum + area, 0);
    // Knud Thomsen's formula, S ≈ 4π((aᵖbᵖ + aᵖcᵖ + bᵖcᵖ)/3)^(1/p), p = 1.6075 (about 1 %).
    const p = 1.6075;
    const thomsen = 4 * Math.PI * (((a * b) ** p + (a * c) ** p + (b * c) ** p) / 3) ** (1 / p);
    // Measured 0.993: the boundary is inscribed in the surface.
    expect(Math.abs(total / thomsen - 1)).toBeLessThan(0.03);
  });

  it('gives soft attachments κ × area: κ = 50 Pa/mm on the block’s 3900 mm² is 195 N/m', () => {
    // 3 × 3 × 3 cells of 10 mm. The diaphragm is the top face's nodes; they take the top's
    // 900 mm² and, of each side square in the top row, half (its two triangles have three
    // corners on the top edge between them, a third of a half-square each): 12 × 50 mm².
    // The rest of the 5400 mm² is 3900 mm²; 50 Pa/mm = 50·10³ N/m³, × 3900·10⁻⁶ m² = 195 N/m.
    const mesh = blockMesh([3, 3, 3], [30, 30, 30]) as TetMesh;
    const boundary = breathingBoundary(mesh, { surroundingStiffnessPaPerMm: 50 });
    const attachments = boundary.boundary.attachments ?? [];
    const total = attachments.reduce((sum, a) => sum + a.stiffnessNPerM, 0);
    expect(total).toBeCloseTo(195, 9);
    expect(attachments.length + boundary.diaphragmNodes.length).toBe(surfaceNodes(mesh).length);
  });

  it('finds the diaphragm on an ellipsoid: the superior-facing cap, with its pole', () => {
    const [a, b, c] = [60, 45, 50];
    const mesh = ellipsoidOrganMesh([a, b, c], 8);
    const nodes = [...diaphragmNodes(mesh, 0.5, 0.5)];
    expect(nodes.length).toBeGreaterThan(20);
    let pole = -1;
    let poleMm = Infinity;
    for (const node of surfaceNodes(mesh)) {
      const [x, y, z] = mesh.nodes.slice(3 * node, 3 * node + 3);
      const d = Math.hypot(x, y, z - c);
      if (d < poleMm) [pole, poleMm] = [node, d];
    }
    expect(nodes).toContain(pole);
    for (const node of nodes) {
      const [x, y, z] = mesh.nodes.slice(3 * node, 3 * node + 3);
      // The ellipsoid's own normal ∝ (x/a², y/b², z/c²) faces superiorly there; the facets
      // approximate it, so a little slack on the 60° cone (cos 60° = 0.5).
      const n = [x / a ** 2, y / b ** 2, z / c ** 2];
      expect(n[2] / Math.hypot(n[0], n[1], n[2])).toBeGreaterThan(0.35);
      expect(z).toBeGreaterThan(-8); // a triangle's centroid in the upper half, its corners near
    }
  });

  it('holds the surface at the entry by the wall, moving with a fraction of the breath', () => {
    const mesh = blockMesh([4, 4, 4], [40, 40, 40]) as TetMesh;
    const boundary = breathingBoundary(mesh, {
      wall: { entryMm: [20, 0, 20], radiusMm: 10, motionFraction: 0.25, stiffnessPaPerMm: 800 },
    });
    // Nodes of the front face (y = 0) within 10 mm of (20, 0, 20): the centre and 4 neighbours.
    expect([...boundary.wallNodes].map((n) => [...mesh.nodes.slice(3 * n, 3 * n + 3)])).toEqual(
      expect.arrayContaining([
        [20, 0, 20],
        [10, 0, 20],
        [30, 0, 20],
        [20, 0, 10],
        [20, 0, 30],
      ]),
    );
    expect(boundary.wallNodes.length).toBe(5);
    const centre = [...boundary.wallNodes].find(
      (n) => mesh.nodes[3 * n] === 20 && mesh.nodes[3 * n + 2] === 20,
    );
    const attachment = (boundary.boundary.attachments ?? []).find((a) => a.node === centre);
    if (!attachment) throw new Error('the entry node is not attached');
    // An inner node of the face: a third of six triangles of 50 mm² = 100 mm² → 800 × 10⁻¹ N/m.
    expect(attachment.stiffnessNPerM).toBeCloseTo(80, 9);
    const target = attachment.targetM as (t: number) => [number, number, number];
    expect(target(0)[2] * 1000).toBeCloseTo(20 + 0.25 * -12, 12);
    expect(target(2)[2] * 1000).toBeCloseTo(20, 12);
  });

  it('refuses bad parameters with the field named', () => {
    const mesh = blockMesh([2, 2, 2], [20, 20, 20]) as TetMesh;
    const field = (options: Parameters<typeof breathingBoundary>[1]): string => {
      try {
        breathingBoundary(mesh, options);
      } catch (error) {
        expect(error).toBeInstanceOf(EngineRefusal);
        return (error as EngineRefusal).field;
      }
      return 'accepted';
    };
    expect(field({ breathing: { periodS: 0 } })).toBe('breathing.periodS');
    expect(field({ breathing: { shapeN: 0.5 } })).toBe('breathing.shapeN');
    expect(field({ breathing: { imagedAt: 'mid' as 'exhale' } })).toBe('breathing.imagedAt');
    expect(field({ surroundingStiffnessPaPerMm: -1 })).toBe('surroundingStiffnessPaPerMm');
    expect(field({ wall: { entryMm: [0, Number.NaN, 0] } })).toBe('wall.entryMm');
    expect(field({ diaphragmMinNormalZ: 1, diaphragmUpperFraction: 0.01 })).toBe('accepted');
  });
});

describe('a target in the middle of the organ follows the diaphragm part of the way', () => {
  // The liver moves with the diaphragm; tumour excursions in the liver are of the order of the
  // diaphragm's (the organ-motion tables of AAPM TG-76, Keall et al., Med Phys 2006 — from
  // memory). In this model the target lies between the driven diaphragm (b) and the softly
  // held rest of the surface: its superior–inferior range should be a large part of b but not
  // more than b (nothing drives the inside further than the diaphragm). Expected 30–100 % of b
  // mid-organ, decreasing from the dome to the inferior side. Measured (611 nodes, 12 mm
  // cells, h = 40 ms): 11.5, 10.5 and 8.5 mm at 25 mm above, at and 25 mm below the centre.
  it('an ellipsoidal liver, 12 mm of diaphragm motion', () => {
    const mesh = ellipsoidOrganMesh([60, 45, 50], 12);
    const boundary = breathingBoundary(mesh, {});
    const h = 0.04;
    const solver = new TissueSolver(mesh, { timeStepS: h, boundary: boundary.boundary });
    // Start at mid-exhalation's rest (the imaged state) and let one breath settle the tissue.
    const start = timeAtPhase(0.5, boundary.parameters, 0);
    solver.setState({ timeS: start });
    const targets = embedPoints(mesh, [
      [0, 0, 25],
      [0, 0, 0],
      [0, 0, -25],
    ]);
    const low = [Infinity, Infinity, Infinity];
    const high = [-Infinity, -Infinity, -Infinity];
    const steps = Math.round(4 / h);
    for (let step = 0; step < 2 * steps; step++) {
      solver.step();
      if (step < steps) continue;
      targets.forEach((target, i) => {
        if (!target) throw new Error('target outside the mesh');
        const z = embeddedPosition(solver.positionsM, mesh, target)[2] * 1000;
        low[i] = Math.min(low[i], z);
        high[i] = Math.max(high[i], z);
      });
    }
    const ranges = high.map((value, i) => value - low[i]);
    expect(ranges[1]).toBeGreaterThan(0.3 * 12);
    expect(ranges[1]).toBeLessThanOrEqual(12);
    expect(ranges[0]).toBeGreaterThan(ranges[1]);
    expect(ranges[1]).toBeGreaterThan(ranges[2]);
    expect(ranges[0]).toBeLessThanOrEqual(12);
  });
});
