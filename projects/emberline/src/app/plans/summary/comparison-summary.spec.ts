import { thresholdsFor, type AssessmentResult, type ZoneAssessment } from '@emberline/shared';
import type { ComparedPlan } from '../comparison-rows';
import {
  applicator,
  done,
  inputs,
  plan,
  resultA,
  safetyProfile,
  tumourId,
} from '../testing/comparison-fixtures';
import { summaryLines } from './comparison-summary';

const names = new Map([[tumourId, 'Tumour segment VIII']]);

function column(result: AssessmentResult, version = 3): ComparedPlan {
  const assessment = done('as-1', 'plan-1', result, { inputs: inputs(version) });
  return { plan: plan('plan-1', 'Invented plan'), assessment, result };
}

function lineOf(result: AssessmentResult, version = 3) {
  return summaryLines([column(result, version)], names)[0];
}

describe('thresholdsFor', () => {
  it('reads the thresholds the assessment recorded, whatever the profile’s version is now', () => {
    expect(thresholdsFor(inputs(3))?.clearanceMm.get('gallbladder')).toBe(10);
    expect(thresholdsFor(inputs(3))?.marginTargetMm).toBe(safetyProfile(3).marginTargetMm);
    expect(thresholdsFor(null)).toBeNull();
  });
});

describe('summaryLines', () => {
  it('picks the clearance with the least room against its minimum, not the nearest one', () => {
    // Portal vein 6 mm against 5 mm leaves 1 mm; the gallbladder 9.5 mm against 10 mm is short.
    const line = lineOf({
      ...resultA,
      applicators: [
        applicator({
          clearances: [
            { kind: 'portal-vein', minDistanceMm: 6, atMm: 50 },
            { kind: 'gallbladder', minDistanceMm: 9.5, atMm: 30 },
            { kind: 'skin', minDistanceMm: 0, atMm: 0 },
          ],
        }),
      ],
    });
    expect(line.clearance).toEqual({
      text: 'Gallbladder 9.5 mm',
      note: 'Minimum 10.0 mm: 0.5 mm short',
      isShort: true,
    });
  });

  it('reads the room on the conservative bound, and says when only the nominal value meets the minimum', () => {
    const line = lineOf({
      ...resultA,
      applicators: [
        applicator({
          clearances: [{ kind: 'portal-vein', minDistanceMm: 5.4, lowerBoundMm: 4.6, atMm: 50 }],
        }),
      ],
    });
    expect(line.clearance.text).toBe('Portal vein 5.4 mm (≥ 4.6 mm)');
    expect(line.clearance.note).toBe('Minimum 5.0 mm: met, but not by its bound');
    expect(line.clearance.isShort).toBe(true);
  });

  it('doubles a critical refusal’s threshold back to the minimum when the profile is not at hand', () => {
    // The verdict refuses a critical kind approached within half its minimum (the safety
    // profile's rule, shared/src/api/safety-profiles.ts).
    const line = lineOf(
      {
        ...resultA,
        applicators: [
          applicator({ clearances: [{ kind: 'gallbladder', minDistanceMm: 3, atMm: 20 }] }),
        ],
        verdict: {
          level: 'not-acceptable',
          reasons: [
            {
              rule: 'critical-clearance',
              kind: 'gallbladder',
              value: 3,
              threshold: 5,
              severity: 'refusal',
              message: 'Invented.',
            },
          ],
        },
      },
      2,
    );
    expect(line.clearance.note).toBe('Minimum 10.0 mm: 7.0 mm short');
  });

  it('says the minimum is not at hand rather than guess it (inputs never recorded)', () => {
    const unrecorded = column({
      ...resultA,
      applicators: [
        applicator({ clearances: [{ kind: 'hepatic-vein', minDistanceMm: 7, atMm: 20 }] }),
      ],
      verdict: { level: 'acceptable', reasons: [] },
    });
    unrecorded.assessment = { ...unrecorded.assessment, inputs: null };
    const line = summaryLines([unrecorded], names)[0];
    expect(line.clearance).toEqual({
      text: 'Hepatic vein 7.0 mm',
      note: 'Nearest structure; the minimum of the profile version assessed is not at hand',
      isShort: false,
    });
  });

  it('names the applicator when a plan has several', () => {
    const line = lineOf({
      ...resultA,
      applicators: [
        applicator({ clearances: [{ kind: 'portal-vein', minDistanceMm: 9, atMm: 20 }] }),
        applicator({ clearances: [{ kind: 'portal-vein', minDistanceMm: 5.5, atMm: 20 }] }),
      ],
    });
    expect(line.clearance.text).toBe('Applicator 2: portal vein 5.5 mm');
    expect(line.clearance.note).toBe('Minimum 5.0 mm: 0.5 mm to spare');
  });

  it('never rounds a tumour not wholly covered up to 100.0 %', () => {
    const zone: ZoneAssessment = {
      ...resultA.zones[0],
      tumours: [{ ...resultA.zones[0].tumours[0], coveredPercent: 99.96 }],
    };
    const line = lineOf({ ...resultA, zones: [zone] });
    expect(line.coverage).toEqual({ text: '99.9 %', note: 'Tumour segment VIII', isShort: true });
  });

  it('names the zone model of the verdict and why another is shown for information only', () => {
    const advisory = {
      ...resultA.zones[0],
      model: 'bioheat' as const,
      isAdvisory: true,
      advisoryReason: 'its fit to the zone table is beyond the profile’s 2 mm tolerance',
    };
    const line = lineOf({ ...resultA, zones: [resultA.zones[0], advisory] });
    expect(line.zoneModel.text).toBe('Applicator zone table');
    expect(line.zoneModel.note).toBe(
      'Physics zone: for information only (its fit to the zone table is beyond the profile’s 2 mm tolerance)',
    );
  });

  it('says an assessment ran on earlier inputs when the plan’s inputs changed since', () => {
    const changed = column(resultA);
    changed.assessment = {
      ...changed.assessment,
      inputChanges: [{ kind: 'label-map', message: 'The label map has been replaced.' }],
    };
    expect(summaryLines([changed], names)[0].isOnEarlierInputs).toBe(true);
    expect(lineOf(resultA).isOnEarlierInputs).toBe(false);
  });
});
