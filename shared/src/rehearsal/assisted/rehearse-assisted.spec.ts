import { describe, expect, it } from 'vitest';
import type { Vec3 } from '../../geometry/vector';
import { meshCellMm } from '../mesh/tet-mesh';
import { rehearseFreehand, type FreehandOptions } from '../insertion/rehearse-freehand';
import { ellipsoidOrganMesh } from '../insertion/testing/ellipsoid-organ';
import { rehearseAssisted } from './rehearse-assisted';

// Robot-assisted against free-hand insertion at the three mesh resolutions (coarse 8, medium 6,
// fine 4 mm cells) under 12 mm of breathing. The organ is a small ellipsoidal "liver" (semi-axes
// 34, 27, 30 mm, about the size of the demo's) so that the fine mesh runs in the test suite; a
// needle from 60 mm in front of it to a target near its centre at 25 mm/s, 50 ms steps, half a
// breath of warm-up, starting at three quarters of the breath so that the needle arrives while
// the liver moves. Goal: tip error below 2 mm — sub-2-mm placement is the usual aim of
// robot-assisted needle placement (common practice) — without divergence, and free-hand error
// larger.
const plan = { startMm: [6, -60, 8] as Vec3, targetMm: [2, 0, 1] as Vec3 };
const settings = (cellMm: number): FreehandOptions => ({
  mesh: ellipsoidOrganMesh([34, 27, 30], cellMm),
  plan,
  speedMmPerS: 25,
  solver: { timeStepS: 0.05 },
  warmUpCycles: 0.5,
  startPhase: 0.75,
  boundary: { breathing: { amplitudeMm: 12, periodS: 4, shapeN: 2 } },
});

describe.each(['coarse', 'medium', 'fine'] as const)('at the %s mesh', (resolution) => {
  const options = settings(meshCellMm[resolution]);
  const freehand = rehearseFreehand(options);
  const assisted = rehearseAssisted({ ...options, control: { strategy: 'pseudo-constraints' } });

  it('the assisted tip ends within 2 mm of the moving target; free-hand misses by more', () => {
    expect(assisted.finalTipErrorMm).toBeLessThan(2);
    expect(freehand.finalTipErrorMm).toBeGreaterThan(2);
    expect(freehand.finalTipErrorMm).toBeGreaterThan(3 * assisted.finalTipErrorMm);
    // The target did move: the free-hand miss is breathing, not the needle.
    expect(freehand.target.insertionMaxDisplacementMm).toBeGreaterThan(2);
  });

  it('stays on the path once the capsule has given way, and never diverges', () => {
    // Pushing the capsule is non-smooth (a unilateral contact capped at the puncture force, its
    // point moving over the surface), so the Jacobian read at one contact state can miss the
    // next: the error jumps while the capsule dimples and gives way (measured up to 2.3 mm at
    // the fine mesh), and the controller brings it back within two steps. From 5 mm past the
    // puncture it holds the path (measured at most 0.02 mm at all three meshes).
    const punctureDepth = assisted.puncture?.depthMm ?? Infinity;
    const settled = assisted.path.filter((sample) => sample.depthMm > punctureDepth + 5);
    expect(settled.length).toBeGreaterThan(5);
    for (const sample of settled) expect(sample.pathErrorMm).toBeLessThan(0.5);
    const worst = Math.max(...assisted.path.map((sample) => sample.pathErrorMm));
    expect(worst).toBeLessThan(freehand.finalTipErrorMm);
    expect(assisted.path[assisted.path.length - 1].depthMm).toBeCloseTo(assisted.plannedDepthMm, 9);
    expect(assisted.puncture).not.toBeNull();
    // The same schedule as free-hand: depth for depth, step for step.
    expect(assisted.path.map((sample) => sample.depthMm)).toEqual(
      freehand.path.map((sample) => sample.depthMm),
    );
  });
});
