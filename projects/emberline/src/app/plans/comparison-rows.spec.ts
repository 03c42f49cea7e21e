import { tumourLabeller, type AssessmentResult, type TumourCoverage } from '@emberline/shared';
import { comparisonGroups, withBound, type ComparedPlan } from './comparison-rows';
import { applicator, done, plan, resultA } from './testing/comparison-fixtures';

/**
 * Tumours in the plan comparison are named by their lesion as the board names it
 * (`lesionLabel()` of shared/: "segment VIII, 24 mm"), never by a label number.
 */
function resultWith(tumours: Partial<TumourCoverage>[]): AssessmentResult {
  const zone = {
    model: 'table',
    volumeMl: 30,
    collateral: [],
    tumours: tumours.map((tumour) => ({
      structureId: 'unset',
      volumeMl: 7,
      coveredPercent: 100,
      minimalMarginMm: 6,
      surfaceBelowTargetPercent: 0,
      ...tumour,
    })),
  };
  // Only the zones are read by the labeller.
  return { zones: [zone] } as unknown as AssessmentResult;
}

describe('tumourLabeller', () => {
  it('names a tumour by the label its assessment gave it', () => {
    const label = tumourLabeller(
      [
        resultWith([
          { structureId: 'a', label: 'segment VIII, 24 mm' },
          { structureId: 'b', label: 'label 3, not linked to a lesion' },
        ]),
      ],
      new Map([['a', 'Tumour (label 2)']]),
    );
    expect(label('a')).toBe('Tumour (segment VIII, 24 mm)');
    expect(label('b')).toBe('Tumour (label 3, not linked to a lesion)');
  });

  it('falls back to the structure name, then the order, for results without labels', () => {
    const label = tumourLabeller(
      [resultWith([{ structureId: 'a' }, { structureId: 'b' }])],
      new Map([['a', 'Tumour 1 of the SEG']]),
    );
    expect(label('a')).toBe('Tumour 1 of the SEG');
    expect(label('b')).toBe('Tumour 2');
  });
});

describe('figures with their bounds', () => {
  // The engine reads each clearance, margin and heat-sink figure from the label map with a
  // conservative bound (shared/src/assessment/README.md); the rows show both, units always.
  const column = (result: AssessmentResult): ComparedPlan => ({
    plan: plan('plan-1', 'Plan 1'),
    assessment: done('assessment-1', 'plan-1', result),
    result,
  });
  const rowOf = (result: AssessmentResult, key: string) => {
    const row = comparisonGroups([column(result)], new Map())
      .flatMap((group) => group.rows)
      .find((candidate) => candidate.key === key);
    if (!row) throw new Error(`no row ${key}`);
    return row;
  };

  it('shows a clearance as the figure read and, in brackets, the least it could be', () => {
    const result: AssessmentResult = {
      ...resultA,
      applicators: [
        applicator({
          clearances: [{ kind: 'gallbladder', minDistanceMm: 8, lowerBoundMm: 6.4, atMm: 40 }],
        }),
      ],
    };
    const row = rowOf(result, 'clearance-gallbladder');
    expect(row.label).toContain('in brackets the least it could be');
    expect(row.cells[0]).toMatchObject({ type: 'figure', value: 8, text: '8.0 mm (≥ 6.4 mm)' });
  });

  it('leaves the bracket out where the bound reads the same, or is missing', () => {
    expect(withBound(12.4, 12.38)).toBe('12.4 mm');
    expect(withBound(3.1, undefined)).toBe('3.1 mm');
    expect(withBound(29, null)).toBe('29.0 mm');
  });

  it('shows a margin with its bound, negative values with a true minus sign', () => {
    const tumour = resultA.zones[0].tumours[0];
    const result: AssessmentResult = {
      ...resultA,
      zones: [
        {
          ...resultA.zones[0],
          tumours: [{ ...tumour, minimalMarginMm: 1.2, minimalMarginLowerMm: -1.3 }],
        },
      ],
    };
    const row = rowOf(result, `margin-${tumour.structureId}`);
    expect(row.label).toContain("allowing a voxel of error and the zone model's");
    expect(row.cells[0]).toMatchObject({ text: '1.2 mm (≥ \u22121.3 mm)', value: 1.2 });
  });

  it('shows the parenchyma before the tumour with its bound', () => {
    const result: AssessmentResult = {
      ...resultA,
      applicators: [
        applicator({ parenchymaBeforeTumourMm: 11, parenchymaBeforeTumourLowerMm: 8.9 }),
      ],
    };
    expect(rowOf(result, 'parenchyma').cells[0]).toMatchObject({ text: '11.0 mm (≥ 8.9 mm)' });
  });

  it('lists a heat sink with its calibre band and the least distance, flagging a possible one', () => {
    const result: AssessmentResult = {
      ...resultA,
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
    };
    expect(rowOf(result, 'heat-sinks').cells[0]).toEqual({
      type: 'list',
      emptyText: 'None found',
      items: [
        {
          text: 'Portal vein: 2.8 mm (2.5 to 3.3 mm) wide, 4.0 mm (≥ 3.2 mm) from the zone',
          flag: 'Possible: unconfirmed at this slice thickness',
        },
      ],
    });
  });
});
