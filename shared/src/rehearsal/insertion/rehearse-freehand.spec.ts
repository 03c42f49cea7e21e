import { describe, expect, it } from 'vitest';
import { EngineRefusal } from '../../assessment/engine-refusal';
import type { Vec3 } from '../../geometry/vector';
import { InsertionSimulation } from './insertion-simulation';
import type { NeedlePose } from './needle';
import { rehearseFreehand, type FreehandOptions } from './rehearse-freehand';
import { ellipsoidOrganMesh } from './testing/ellipsoid-organ';

// An ellipsoidal "liver" (semi-axes 60, 45, 50 mm; 12 mm cells, about 600 nodes), a needle
// from 90 mm in front of it to its centre, 20 mm/s, 40 ms steps.
const mesh = ellipsoidOrganMesh([60, 45, 50], 12);
const plan = { startMm: [10, -90, 10] as Vec3, targetMm: [0, 0, 0] as Vec3 };
const common: FreehandOptions = {
  mesh,
  plan,
  speedMmPerS: 20,
  solver: { timeStepS: 0.04 },
  startPhase: 0.5,
};

describe('free-hand insertion along the plan, no correction', () => {
  // Without breathing only the needle deforms the liver (capsule push, friction), so the tip
  // ends close to the target; with the diaphragm moving 12 mm the target moves under a needle
  // that keeps to the planned line in the room, so the error grows to the order of the
  // target's own motion. (Breathing motion is the main source of targeting error in free
  // breathing — the premise of respiratory gating and breath-hold in TG-76, Keall et al.,
  // Med Phys 2006 — from memory.)
  const still = rehearseFreehand({ ...common, boundary: { breathing: null } });
  const breathing = rehearseFreehand({ ...common, boundary: { breathing: { amplitudeMm: 12 } } });

  it('misses by more with breathing than without', () => {
    // Measured: 0.02 mm still, 8.8 mm breathing (8.4 mm of it across the needle); the exact
    // compliance gives the same to 0.001 mm.
    expect(still.finalTipErrorMm).toBeLessThan(2);
    expect(breathing.finalTipErrorMm).toBeGreaterThan(3 * still.finalTipErrorMm);
    expect(breathing.finalTipErrorMm).toBeGreaterThan(0.25 * 12);
  });

  it('reports the target’s breathing motion: 30–100 % of the diaphragm’s 12 mm', () => {
    // Measured 10.5 mm (the same organ as in breathing.spec.ts, with the wall at the entry).
    expect(breathing.diaphragmSiRangeMm).toBeCloseTo(12, 6);
    expect(breathing.target.breathingSiRangeMm).toBeGreaterThan(0.3 * 12);
    expect(breathing.target.breathingSiRangeMm).toBeLessThanOrEqual(12);
    expect(still.target.breathingSiRangeMm).toBe(0);
    expect(still.diaphragmSiRangeMm).toBe(0);
  });

  it('punctures the capsule once and goes to the planned depth, recording the path', () => {
    for (const run of [still, breathing]) {
      expect(run.puncture).not.toBeNull();
      expect(run.puncture?.forceN).toBeCloseTo(1, 9); // the default puncture force
      const depths = run.path.map((sample) => sample.depthMm);
      for (let i = 1; i < depths.length; i++) expect(depths[i]).toBeGreaterThan(depths[i - 1]);
      expect(depths[depths.length - 1]).toBeCloseTo(run.plannedDepthMm, 9);
      expect(run.finalTipMm.map((v, a) => v - plan.targetMm[a])).toEqual(
        [0, 0, 0].map(() => expect.closeTo(0, 9)),
      );
    }
  });
});

describe('the step API a controller uses', () => {
  it('solves one free motion for several needle commands and keeps the one committed', () => {
    const simulation = new InsertionSimulation({
      mesh,
      plan,
      solver: { timeStepS: 0.04 },
      boundary: { breathing: null },
    });
    const direction = [-10, 90, -10].map((v) => v / Math.hypot(10, 90, 10)) as Vec3;
    const pose: NeedlePose = { baseMm: plan.startMm, direction, rollRad: 0 };
    // Push until the capsule gives way, then go on 20 mm.
    let depth = simulation.entryDistanceMm - 1;
    while (!simulation.needle.punctured) simulation.step(pose, (depth += 0.8));
    for (let i = 0; i < 25; i++) simulation.step(pose, (depth += 0.8));
    simulation.beginStep();
    const first = simulation.solveConstraints(pose, depth + 0.8);
    const again = simulation.solveConstraints(pose, depth + 0.8);
    const moved = simulation.solveConstraints({ ...pose, baseMm: [12, -90, 10] }, depth + 0.8);
    expect(Array.from(again.solution.impulsesNs)).toEqual(Array.from(first.solution.impulsesNs));
    expect(again.predictedTargetMm).toEqual(first.predictedTargetMm);
    // Moving the base 2 mm to the side drags the held tissue, and the target with it.
    expect(moved.predictedTargetMm[0] - first.predictedTargetMm[0]).toBeGreaterThan(0.05);
    const record = simulation.commitStep(moved);
    record.targetMm.forEach((v, a) => expect(v).toBeCloseTo(moved.predictedTargetMm[a], 9));
    // Refinement stops at 10 µm (the default), or after three passes.
    expect(record.bilateralResidualM).toBeLessThan(5e-5);
  });
});

describe('refusals (EngineRefusal, the field named)', () => {
  const field = (options: Partial<FreehandOptions>): string => {
    try {
      rehearseFreehand({ ...common, ...options, warmUpCycles: 0 });
    } catch (error) {
      expect(error).toBeInstanceOf(EngineRefusal);
      return (error as EngineRefusal).field;
    }
    return 'accepted';
  };

  it('names what is wrong', () => {
    expect(field({ plan: { startMm: [0, 0, 5], targetMm: [0, 0, 0] } })).toBe('plan.startMm');
    expect(field({ plan: { startMm: [0, -90, 0], targetMm: [0, 0, 80] } })).toBe('plan.targetMm');
    expect(field({ solver: { timeStepS: 0.1 } })).toBe('solver.timeStepS');
    expect(field({ startPhase: 2 })).toBe('startPhase');
    expect(field({ speedMmPerS: 0 })).toBe('speedMmPerS');
    expect(field({ needle: { punctureForceN: -1 } })).toBe('needle.punctureForceN');
    expect(field({ compliance: 'fast' as 'exact' })).toBe('compliance');
  });
});
