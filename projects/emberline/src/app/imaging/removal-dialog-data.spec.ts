import type { SeriesRemovalView } from '@emberline/shared';
import { removalDialogData } from './imaging-section';

/** An invented removal preview of a CT series. */
const removal = (overrides: Partial<SeriesRemovalView> = {}): SeriesRemovalView => ({
  seriesId: 'a0000000-0000-4000-8000-000000000001',
  seriesLabel: 'CT series 3, 120 slices',
  structures: [
    { id: 's1', name: 'Liver', lesionLabel: null, isLesionConfirmed: false },
    { id: 's2', name: 'Tumour 1', lesionLabel: 'segment VIII, 24 mm', isLesionConfirmed: true },
  ],
  hasLabelMap: true,
  plans: [{ id: 'p1', name: 'Lateral approach' }],
  annotationCount: 2,
  keyImageCount: 1,
  blockedBy: [],
  ...overrides,
});

describe('removalDialogData', () => {
  it('names everything that goes with the series', () => {
    const data = removalDialogData(removal(), 'remove');
    expect(data.title).toBe('Remove the series CT series 3, 120 slices?');
    expect(data.items).toEqual([
      'The series CT series 3, 120 slices and its image volume',
      'Structure Liver',
      'Structure Tumour 1 (confirmed link to the lesion in segment VIII, 24 mm)',
      'Its label map',
      'Plan Lateral approach, drafted on it',
      '2 annotations',
      '1 key image',
    ]);
    expect(data.blockedReason).toBeUndefined();
  });

  it('is blocked, naming the plans and their assessments, while an assessment ran on it', () => {
    const data = removalDialogData(
      removal({
        blockedBy: [{ planId: 'p1', planName: 'Lateral approach', assessmentCount: 2 }],
      }),
      'replace',
    );
    expect(data.title).toBe('Replace the series CT series 3, 120 slices?');
    expect(data.blockedReason).toContain('plan Lateral approach: 2 assessments');
  });
});
