import type { AssessmentResult, TumourCoverage } from '@emberline/shared';
import { tumourLabeller } from './comparison-rows';

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
