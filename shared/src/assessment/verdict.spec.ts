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
  rehearsalToleranceMm: 2,
  rehearsalToleranceSource: 'common practice',
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

describe('judgePlan: figures whose bound misses a rule their nominal value meets', () => {
  // Each rule is judged on the nominal figure first; where that passes but the figure's
  // conservative bound (the labelled surfaces a voxel off) does not, a caution says so — the
  // rule's threshold lies inside the figure's band (safety profile contract; values invented).
  it('cautions a clearance that meets the minimum only by its nominal value', () => {
    const verdict = judged({
      applicators: [
        applicator({
          clearances: [{ kind: 'gallbladder', minDistanceMm: 10.4, lowerBoundMm: 5.4, atMm: 30 }],
        }),
      ],
    });
    expect(verdict.level).toBe('acceptable-with-cautions');
    expect(verdict.reasons).toHaveLength(1);
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.clearance,
      kind: 'gallbladder',
      value: 10.4,
      bound: 5.4,
      threshold: 10,
      severity: 'caution',
    });
    const { message } = verdict.reasons[0];
    expect(message).toContain('10.4 mm');
    expect(message).toContain('5.4 mm');
    expect(message).toContain('at least 10.0 mm cannot be confirmed at this slice thickness');
    expect(message).toContain('source G');
  });

  it('stays silent when the bound meets the minimum too', () => {
    const verdict = judged({
      applicators: [
        applicator({
          clearances: [{ kind: 'gallbladder', minDistanceMm: 12, lowerBoundMm: 10.2, atMm: 30 }],
        }),
      ],
    });
    expect(verdict.reasons).toEqual([]);
  });

  it('keeps the bound on a clearance under the minimum, and words it', () => {
    const verdict = judged({
      applicators: [
        applicator({
          clearances: [{ kind: 'gallbladder', minDistanceMm: 8, lowerBoundMm: 6.4, atMm: 30 }],
        }),
      ],
    });
    expect(verdict.reasons[0]).toMatchObject({ value: 8, bound: 6.4, severity: 'caution' });
    expect(verdict.reasons[0].message).toContain('as little as 6.4 mm');
  });

  it('cautions a critical kind whose half-minimum holds only by the nominal clearance', () => {
    // Hepatic artery, minimum 5 mm, critical: nominal 3 mm is a caution (under 5 mm, not under
    // 2.5 mm); its bound of 1.8 mm could break the half-minimum rule: a second caution, not a
    // refusal.
    const verdict = judged({
      applicators: [
        applicator({
          clearances: [{ kind: 'hepatic-artery', minDistanceMm: 3, lowerBoundMm: 1.8, atMm: 55 }],
        }),
      ],
    });
    expect(verdict.level).toBe('acceptable-with-cautions');
    expect(verdict.reasons.map((reason) => [reason.rule, reason.severity])).toEqual([
      [verdictRules.clearance, 'caution'],
      [verdictRules.criticalClearance, 'caution'],
    ]);
    expect(verdict.reasons[1]).toMatchObject({ value: 3, bound: 1.8, threshold: 2.5 });
    expect(verdict.reasons[1].message).toContain('cannot be confirmed');
  });

  it('cautions parenchyma before the tumour that meets the minimum only nominally', () => {
    const verdict = judged({
      applicators: [
        applicator({ parenchymaBeforeTumourMm: 11, parenchymaBeforeTumourLowerMm: 8.9 }),
      ],
    });
    expect(verdict.reasons).toHaveLength(1);
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.parenchymaBeforeTumour,
      value: 11,
      bound: 8.9,
      threshold: 10,
      severity: 'caution',
    });
    expect(verdict.reasons[0].message).toContain('cannot be confirmed at this slice thickness');
  });

  it('cautions a margin whose bound falls under the target, naming the zone model error', () => {
    const verdict = judged({
      zone: {
        ...zone({ minimalMarginMm: 6, minimalMarginLowerMm: 3.5 }),
        boundaryErrorMm: 1.2,
      },
    });
    expect(verdict.reasons).toHaveLength(1);
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.marginTarget,
      value: 6,
      bound: 3.5,
      threshold: 5,
      severity: 'caution',
    });
    expect(verdict.reasons[0].message).toContain('boundary error of 1.2 mm');
    expect(verdict.reasons[0].message).toContain('the margin target of 5.0 mm cannot be confirmed');
  });

  it('cautions, never refuses, a margin whose bound falls under the minimum', () => {
    // Nominal 3 mm: under the 5 mm target (caution, as before); bound −0.5 mm under the 0 mm
    // minimum: a caution that the minimum cannot be confirmed, not a refusal.
    const verdict = judged({ zone: zone({ minimalMarginMm: 3, minimalMarginLowerMm: -0.5 }) });
    expect(verdict.level).toBe('acceptable-with-cautions');
    expect(verdict.reasons.map((reason) => [reason.rule, reason.severity])).toEqual([
      [verdictRules.marginTarget, 'caution'],
      [verdictRules.marginMinimum, 'caution'],
    ]);
    expect(verdict.reasons[1].message).toContain(
      'the minimal margin of 0.0 mm cannot be confirmed',
    );
  });

  it('cautions a possible heat sink whose calibre band straddles the threshold', () => {
    const verdict = judged({
      heatSinks: [
        {
          kind: 'portal-vein',
          diameterMm: 2.8,
          diameterLowerMm: 2.5,
          diameterUpperMm: 3.3,
          distanceMm: 4,
          distanceLowerMm: 3.2,
          isPossible: true,
        },
      ],
    });
    expect(verdict.reasons).toHaveLength(1);
    expect(verdict.reasons[0]).toMatchObject({
      rule: verdictRules.heatSink,
      value: 2.8,
      bound: 3.3,
      threshold: 3,
      severity: 'caution',
    });
    expect(verdict.reasons[0].message).toContain('calibre cannot be confirmed');
    expect(verdict.reasons[0].message).toContain('2.5 mm to 3.3 mm');
  });

  it('cautions a possible heat sink whose gap is within the distance only by its bound', () => {
    const verdict = judged({
      heatSinks: [
        {
          kind: 'hepatic-vein',
          diameterMm: 5,
          diameterLowerMm: 4.6,
          diameterUpperMm: 5.3,
          distanceMm: 11,
          distanceLowerMm: 9.1,
          isPossible: true,
        },
      ],
    });
    expect(verdict.reasons[0].message).toContain('distance cannot be confirmed');
    expect(verdict.reasons[0].message).toContain('as little as 9.1 mm');
  });
});
