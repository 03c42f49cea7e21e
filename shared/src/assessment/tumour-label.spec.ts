/**
 * Tumours are named by their lesion in the figures and the verdict, never by a label number:
 * the rule of `lesionLabel()` (shared/src/api/lesion-label.ts: "segment VIII, 24 mm") and of the
 * verdict reasons naming what they judge (DEVELOPERS.md, "States"). The thresholds of the
 * profile below are invented for the test, not recommendations.
 */
import { describe, expect, it } from 'vitest';
import type { TumourCoverage, ZoneAssessment } from '../api/assessments';
import { lesionLabel } from '../api/lesion-label';
import type { SafetyProfileBody } from '../api/safety-profiles';
import type { AssessmentStructure } from './assessment-input';
import { takeLabelInventory } from './label-inventory';
import { treatedTumours } from './treated-tumours';
import { tumourLabelOf, tumourName } from './tumour-label';
import { judgePlan } from './verdict';

const profile: SafetyProfileBody = {
  name: 'Test profile',
  structureRules: [],
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

const linked = lesionLabel({ segment: 'VIII', diameterMm: 24 });

function coverage(overrides: Partial<TumourCoverage>): TumourCoverage {
  return {
    structureId: 's',
    volumeMl: 7.2,
    coveredPercent: 100,
    minimalMarginMm: 8,
    minimalMarginLowerMm: 8,
    surfaceBelowTargetPercent: 0,
    ...overrides,
  };
}

describe('tumourLabelOf', () => {
  it("is the confirmed lesion's label, else says the tumour is not linked", () => {
    expect(tumourLabelOf({ labelValue: 2, label: linked })).toBe('segment VIII, 24 mm');
    expect(tumourLabelOf({ labelValue: 3 })).toBe('label 3, not linked to a lesion');
    expect(tumourName(linked)).toBe('The tumour (segment VIII, 24 mm)');
  });
});

describe('the tumours a plan is judged on', () => {
  it('carry the label of their structure, or the not-linked one', () => {
    // Two one-voxel tumours on a 3 × 1 × 1 grid.
    const labelMap = Uint8Array.from([2, 0, 3]);
    const structures: AssessmentStructure[] = [
      { id: 'a', labelValue: 2, kind: 'tumour', label: linked },
      { id: 'b', labelValue: 3, kind: 'tumour' },
    ];
    const inventory = takeLabelInventory(labelMap, [3, 1, 1], structures);
    const treated = treatedTumours(structures, inventory, [2, 3], [], [], {
      labels: labelMap,
      box: { start: [0, 0, 0], size: [3, 1, 1] },
    });
    expect(treated.map((tumour) => tumour.label)).toEqual([
      'segment VIII, 24 mm',
      'label 3, not linked to a lesion',
    ]);
  });
});

describe('the verdict', () => {
  it('names each tumour by its lesion in coverage and margin reasons', () => {
    const zone: ZoneAssessment = {
      model: 'table',
      boundaryErrorMm: 0,
      volumeMl: 30,
      tumours: [
        coverage({ structureId: 'a', label: linked, coveredPercent: 92 }),
        coverage({
          structureId: 'b',
          label: 'label 3, not linked to a lesion',
          minimalMarginMm: 2,
          minimalMarginLowerMm: 2,
        }),
      ],
      collateral: [],
    };
    const verdict = judgePlan(
      { applicators: [], samplesOutsideSeries: [], zone, heatSinks: [], cutZoneModels: [] },
      profile,
    );
    const messages = verdict.reasons.map((reason) => reason.message);
    expect(messages.some((text) => text.startsWith('The tumour (segment VIII, 24 mm) is'))).toBe(
      true,
    );
    expect(
      messages.some((text) =>
        text.startsWith('The tumour (label 3, not linked to a lesion): minimal ablative margin'),
      ),
    ).toBe(true);
    expect(messages.join(' ')).not.toMatch(/Tumour \d/);
  });
});
