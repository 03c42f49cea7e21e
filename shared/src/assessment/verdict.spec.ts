import { describe, expect, it } from 'vitest';
import type { ApplicatorSafety, ZoneAssessment } from '../api/assessments';
import type { SafetyProfileBody } from '../api/safety-profiles';
import { judgePlan, verdictRules, type VerdictFigures } from './verdict';

// The rules come from the safety profile contract (shared/src/api/safety-profiles.ts) and
// the verdict levels of DEVELOPERS.md ("States"); the thresholds below are invented for the
// test, not recommendations.
const profile: SafetyProfileBody = {
  name: 'Test profile',
  structureRules: [
    { kind: 'hepatic-artery', minimumClearanceMm: 5, isCritical: true, source: 'source A' },
    { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: false, source: 'source G' },
    { kind: 'liver', minimumClearanceMm: 0, isCritical: false, source: 'source L' },
  ],
  marginTargetMm: 5,
  marginTargetSource: 'source T',
  marginMinimumMm: 0,
  marginMinimumSource: 'source M',
  heatSinkDiameterMm: 3,
  heatSinkDistanceMm: 10,
  heatSinkKinds: ['hepatic-vein', 'portal-vein'],
  heatSinkSource: 'source H',
  maximumAngulationDeg: 45,
  angulationSource: 'source Q',
  minimumParenchymaBeforeTumourMm: 10,
  parenchymaSource: 'source P',
  maximumCapsuleCrossings: 1,
  capsuleSource: 'source C',
  physicsToleranceMm: 2,
  physicsToleranceSource: 'common practice',
};

function applicator(overrides: Partial<ApplicatorSafety> = {}): ApplicatorSafety {
  return {
    pathLengthMm: 100,
    workingLengthMm: 150,
    angulationDeg: 20,
    clearances: [
      { kind: 'hepatic-artery', minDistanceMm: 12, atMm: 80 },
      { kind: 'gallbladder', minDistanceMm: 25, atMm: 60 },
      { kind: 'liver', minDistanceMm: 0, atMm: 40 },
    ],
    traversed: [
      { kind: 'liver', lengthMm: 40, critical: false },
      { kind: 'tumour', lengthMm: 10, critical: false },
    ],
    capsuleCrossings: 1,
    parenchymaBeforeTumourMm: 30,
    ...overrides,
  };
}

function zone(overrides: Partial<ZoneAssessment['tumours'][number]> = {}): ZoneAssessment {
  return {
    model: 'table',
    volumeMl: 20,
    tumours: [
      {
        structureId: 't1',
        volumeMl: 4,
        coveredPercent: 100,
        minimalMarginMm: 7,
        surfaceBelowTargetPercent: 0,
        ...overrides,
      },
    ],
    collateral: [],
  };
}

function figures(overrides: Partial<VerdictFigures> = {}): VerdictFigures {
  return {
    applicators: [applicator()],
    samplesOutsideSeries: [0],
    zone: zone(),
    heatSinks: [],
    cutZoneModels: [],
    ...overrides,
  };
}

function judged(overrides: Partial<VerdictFigures>) {
  return judgePlan(figures(overrides), profile);
}

describe('judgePlan', () => {
  it('finds a plan within every rule acceptable, with no reason', () => {
    expect(judgePlan(figures(), profile)).toEqual({ level: 'acceptable', reasons: [] });
  });

  it('refuses a path through a critical structure', () => {
    const verdict = judged({
      applicators: [
        applicator({
          traversed: [{ kind: 'hepatic-artery', lengthMm: 2.5, critical: true }],
          clearances: [{ kind: 'hepatic-artery', minDistanceMm: 0, atMm: 70 }],
        }),
      ],
    });
    expect(verdict.level).toBe('not-acceptable');
    // One reason: the traversal, not a clearance reason on top.
    expect(verdict.reasons).toHaveLength(1);
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.criticalTraversal,
      kind: 'hepatic-artery',
      value: 2.5,
      threshold: 0,
      severity: 'refusal',
    });
    expect(verdict.reasons[0].message).toContain('2.5 mm through the hepatic artery');
    expect(verdict.reasons[0].message).toContain('source A');
  });

  it('cautions a clearance below the minimum of a non-critical kind', () => {
    const verdict = judged({
      applicators: [
        applicator({ clearances: [{ kind: 'gallbladder', minDistanceMm: 3, atMm: 55 }] }),
      ],
    });
    expect(verdict.level).toBe('acceptable-with-cautions');
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.clearance,
      kind: 'gallbladder',
      value: 3,
      threshold: 10,
      severity: 'caution',
    });
    expect(verdict.reasons[0].message).toContain('3.0 mm from the gallbladder');
  });

  it('cautions a critical kind approached between half the minimum and the minimum', () => {
    const verdict = judged({
      applicators: [
        applicator({ clearances: [{ kind: 'hepatic-artery', minDistanceMm: 3, atMm: 55 }] }),
      ],
    });
    expect(verdict.reasons[0]).toMatchObject({ rule: verdictRules.clearance, severity: 'caution' });
  });

  it('refuses a critical kind approached under half its minimum', () => {
    const verdict = judged({
      applicators: [
        applicator({ clearances: [{ kind: 'hepatic-artery', minDistanceMm: 2.4, atMm: 55 }] }),
      ],
    });
    expect(verdict.level).toBe('not-acceptable');
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.criticalClearance,
      value: 2.4,
      threshold: 2.5,
      severity: 'refusal',
    });
  });

  it('refuses a path longer than the working length', () => {
    const verdict = judged({
      applicators: [applicator({ pathLengthMm: 152, workingLengthMm: 150 })],
    });
    expect(verdict.level).toBe('not-acceptable');
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.workingLength,
      value: 152,
      threshold: 150,
      severity: 'refusal',
    });
    expect(verdict.reasons[0].message).toContain('152.0 mm');
  });

  it('cautions an angulation above the maximum', () => {
    const verdict = judged({ applicators: [applicator({ angulationDeg: 50 })] });
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.angulation,
      value: 50,
      threshold: 45,
      severity: 'caution',
    });
    expect(verdict.reasons[0].message).toContain('50.0°');
  });

  it('cautions capsule crossings above the maximum', () => {
    const verdict = judged({ applicators: [applicator({ capsuleCrossings: 3 })] });
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.capsuleCrossings,
      value: 3,
      threshold: 1,
      severity: 'caution',
    });
  });

  it('cautions less parenchyma before the tumour than the minimum', () => {
    const verdict = judged({ applicators: [applicator({ parenchymaBeforeTumourMm: 4 })] });
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.parenchymaBeforeTumour,
      value: 4,
      threshold: 10,
      severity: 'caution',
    });
  });

  it('refuses a tumour not fully covered, and its negative margin', () => {
    const verdict = judged({ zone: zone({ coveredPercent: 93, minimalMarginMm: -2 }) });
    expect(verdict.level).toBe('not-acceptable');
    expect(verdict.reasons.map((reason) => reason.rule)).toEqual([
      verdictRules.tumourCoverage,
      verdictRules.marginMinimum,
    ]);
    expect(verdict.reasons[0]).toMatchObject({ value: 93, threshold: 100, severity: 'refusal' });
    expect(verdict.reasons[1]).toMatchObject({ value: -2, threshold: 0, severity: 'refusal' });
  });

  it('refuses a margin below the minimum even with the tumour covered', () => {
    const strict = { ...profile, marginMinimumMm: 2 };
    const verdict = judgePlan(figures({ zone: zone({ minimalMarginMm: 1.5 }) }), strict);
    expect(verdict.reasons).toHaveLength(1);
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.marginMinimum,
      value: 1.5,
      threshold: 2,
      severity: 'refusal',
    });
  });

  it('cautions a margin at or above the minimum but below the target', () => {
    const verdict = judged({ zone: zone({ minimalMarginMm: 3, surfaceBelowTargetPercent: 12 }) });
    expect(verdict.level).toBe('acceptable-with-cautions');
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.marginTarget,
      value: 3,
      threshold: 5,
      severity: 'caution',
    });
    expect(verdict.reasons[0].message).toContain('12.0 % of its surface');
  });

  it('cautions each heat-sink vessel', () => {
    const verdict = judged({
      heatSinks: [
        { kind: 'hepatic-vein', diameterMm: 6, distanceMm: 2 },
        { kind: 'portal-vein', diameterMm: 4, distanceMm: 8 },
      ],
    });
    expect(verdict.reasons.map((reason) => [reason.rule, reason.kind])).toEqual([
      [verdictRules.heatSink, 'hepatic-vein'],
      [verdictRules.heatSink, 'portal-vein'],
    ]);
    expect(verdict.reasons[0]).toMatchObject({ value: 6, threshold: 3, severity: 'caution' });
    expect(verdict.reasons[0].message).toContain('6.0 mm wide lies 2.0 mm from the table zone');
  });

  it('cautions that coverage was not assessed without a tumour', () => {
    const verdict = judged({ zone: { ...zone(), tumours: [] } });
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.coverageNotAssessed,
      severity: 'caution',
    });
  });

  it('cautions a path reaching beyond the series', () => {
    const verdict = judged({ samplesOutsideSeries: [14] });
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.pathBeyondSeries,
      value: 14,
      severity: 'caution',
    });
  });

  it('cautions a zone cut by the edge of its grid', () => {
    const verdict = judged({ cutZoneModels: ['bioheat'] });
    expect(verdict.reasons[0]).toMatchObject({ rule: verdictRules.zoneCut, severity: 'caution' });
    expect(verdict.reasons[0].message).toContain('bioheat zone');
  });

  it('names each applicator of a plan with several', () => {
    const verdict = judged({
      applicators: [applicator(), applicator({ angulationDeg: 60 })],
      samplesOutsideSeries: [0, 0],
    });
    expect(verdict.reasons[0].message.startsWith('Applicator 2 ')).toBe(true);
  });

  it('lets a refusal outweigh any caution', () => {
    const verdict = judged({
      applicators: [applicator({ angulationDeg: 60, pathLengthMm: 200 })],
    });
    expect(verdict.level).toBe('not-acceptable');
    expect(verdict.reasons.map((reason) => reason.severity).sort()).toEqual(['caution', 'refusal']);
  });
});
