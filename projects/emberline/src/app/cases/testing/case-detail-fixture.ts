import { computeLiverScores, DEFAULT_REHEARSAL_SETTINGS, type CaseDetail } from '@emberline/shared';

/** An invented draft case of the North board, editable by its presenter (client unit tests). */
export function caseDetailFixture(overrides: Partial<CaseDetail> = {}): CaseDetail {
  return {
    id: '9c1d2e3f-4a5b-4c6d-8e7f-0a1b2c3d4e5f',
    caseCode: 'NLB-2026-031',
    board: { id: '0b501abd-97fb-4520-b198-4899fae861f7', name: 'North Liver Board' },
    presenter: { id: '5060b703-4567-49c1-8c9e-9f968386140a', displayName: 'Dr Priya Raman' },
    yearOfBirth: 1958,
    sex: 'male',
    primaryDiagnosis: 'hcc',
    status: 'draft',
    ecogPerformanceStatus: null,
    hasVascularInvasion: null,
    hasExtrahepaticSpread: null,
    rehearsal: DEFAULT_REHEARSAL_SETTINGS,
    hasOwnRehearsalSettings: false,
    lesions: [],
    labPanels: [],
    scores: computeLiverScores({ lesionDiametersMm: [] }),
    permissions: { canEdit: true, canDelete: true, canAddLabPanel: true },
    createdAt: '2026-11-20T10:00:00.000Z',
    updatedAt: '2026-11-20T10:00:00.000Z',
    ...overrides,
  };
}
