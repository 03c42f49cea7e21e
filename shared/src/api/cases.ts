import { z } from 'zod';
import type { LiverScores } from '../scores';
import { rehearsalSettingsSchema, type RehearsalSettings } from './rehearsal-settings';

export const primaryDiagnoses = ['hcc', 'crlm', 'icc', 'other'] as const;
export type PrimaryDiagnosis = (typeof primaryDiagnoses)[number];
export const primaryDiagnosisLabels: Record<PrimaryDiagnosis, string> = {
  hcc: 'Hepatocellular carcinoma',
  crlm: 'Colorectal liver metastasis',
  icc: 'Intrahepatic cholangiocarcinoma',
  other: 'Other',
};

export const sexes = ['female', 'male', 'other', 'unknown'] as const;
export type Sex = (typeof sexes)[number];

/** Case states, in order (DEVELOPERS.md, "The product's shape"). */
export const caseStatuses = [
  'draft',
  'ready-for-board',
  'on-agenda',
  'decided',
  'booked',
  'treated',
  'follow-up-due',
] as const;
export type CaseStatus = (typeof caseStatuses)[number];
export const caseStatusLabels: Record<CaseStatus, string> = {
  draft: 'Draft',
  'ready-for-board': 'Ready for board',
  'on-agenda': 'On agenda',
  decided: 'Decided',
  booked: 'Booked',
  treated: 'Treated',
  'follow-up-due': 'Follow-up due',
};
/** States in which a nurse coordinator sees a case: once the board has decided it. */
export const coordinatorVisibleStatuses: readonly CaseStatus[] = [
  'decided',
  'booked',
  'treated',
  'follow-up-due',
];

/** Couinaud segments I–VIII. */
export const couinaudSegments = ['I', 'II', 'III', 'IV', 'V', 'VI', 'VII', 'VIII'] as const;
export type CouinaudSegment = (typeof couinaudSegments)[number];

export const lesionKinds = [
  'hcc',
  'metastasis',
  'cholangiocarcinoma',
  'indeterminate',
  'other',
] as const;
export type LesionKind = (typeof lesionKinds)[number];
export const lesionKindLabels: Record<LesionKind, string> = {
  hcc: 'Hepatocellular carcinoma',
  metastasis: 'Metastasis',
  cholangiocarcinoma: 'Cholangiocarcinoma',
  indeterminate: 'Indeterminate',
  other: 'Other',
};

/**
 * A case code names the case without naming the patient: letters, digits and dashes,
 * 3–24 characters. Never a hospital number.
 */
export const caseCodeSchema = z
  .string()
  .trim()
  .regex(/^[A-Za-z0-9][A-Za-z0-9-]{2,23}$/, '3–24 letters, digits or dashes')
  .transform((code) => code.toUpperCase());

const currentYear = new Date().getUTCFullYear();

export const createCaseSchema = z.object({
  caseCode: caseCodeSchema,
  boardId: z.uuid(),
  presenterId: z.uuid().optional(),
  yearOfBirth: z.number().int().min(1900).max(currentYear),
  sex: z.enum(sexes),
  primaryDiagnosis: z.enum(primaryDiagnoses),
  ecogPerformanceStatus: z.number().int().min(0).max(4).nullable().optional(),
  hasVascularInvasion: z.boolean().nullable().optional(),
  hasExtrahepaticSpread: z.boolean().nullable().optional(),
});
export type CreateCaseRequest = z.input<typeof createCaseSchema>;

export const updateCaseSchema = createCaseSchema
  .omit({ boardId: true })
  .partial()
  .extend({
    status: z.enum(['draft', 'ready-for-board']).optional(),
    /** The case's insertion-rehearsal settings; null goes back to the defaults. */
    rehearsal: rehearsalSettingsSchema.nullable().optional(),
  })
  .refine((value) => Object.keys(value).length > 0, 'at least one field to change');
export type UpdateCaseRequest = z.input<typeof updateCaseSchema>;

const romanBySegmentNumber: Record<number, CouinaudSegment> = {
  1: 'I',
  2: 'II',
  3: 'III',
  4: 'IV',
  5: 'V',
  6: 'VI',
  7: 'VII',
  8: 'VIII',
};

/** Accepts a segment as its Roman numeral ("VII") or its number (7). */
export const couinaudSegmentSchema = z.union([
  z.enum(couinaudSegments),
  z
    .number()
    .int()
    .min(1)
    .max(8)
    .transform((n) => romanBySegmentNumber[n] as CouinaudSegment),
]);

export const createLesionSchema = z.object({
  segment: couinaudSegmentSchema,
  diameterMm: z.number().positive().max(300),
  kind: z.enum(lesionKinds),
});
export type CreateLesionRequest = z.input<typeof createLesionSchema>;

/** PATCH /api/cases/:id/lesions/:lesionId — any of segment, diameter and kind, corrected. */
export const updateLesionSchema = createLesionSchema
  .partial()
  .strict()
  .refine(
    (value) => Object.values(value).some((field) => field !== undefined),
    'Send at least one of segment, diameterMm and kind.',
  );
export type UpdateLesionRequest = z.input<typeof updateLesionSchema>;

export const ascitesGrades = ['none', 'mild', 'moderate-severe'] as const;
export const encephalopathyGrades = ['none', 'grade-1-2', 'grade-3-4'] as const;

const measured = <U extends string>(units: readonly [U, ...U[]], max: Record<U, number>) =>
  z
    .object({ value: z.number().positive(), unit: z.enum(units) })
    .refine((m) => m.value <= max[m.unit], {
      message: 'outside the plausible range',
      path: ['value'],
    });

export const createLabPanelSchema = z.object({
  takenAt: z.iso
    .datetime({ offset: true })
    .or(z.iso.date())
    .refine((value) => Date.parse(value) <= Date.now() + 60_000, 'not in the future'),
  bilirubin: measured(['mg/dL', 'umol/L'], { 'mg/dL': 80, 'umol/L': 1400 }),
  albumin: measured(['g/dL', 'g/L'], { 'g/dL': 7, 'g/L': 70 }),
  inr: z.number().min(0.5).max(15),
  creatinine: measured(['mg/dL', 'umol/L'], { 'mg/dL': 25, 'umol/L': 2200 }),
  sodiumMmolL: z.number().min(100).max(180),
  plateletsE9L: z.number().min(0).max(2000),
  ascites: z.enum(ascitesGrades),
  encephalopathy: z.enum(encephalopathyGrades),
  dialysisTwiceInPastWeek: z.boolean(),
});
export type CreateLabPanelRequest = z.input<typeof createLabPanelSchema>;

/** Why a panel was corrected or withdrawn: kept with it, shown in the lab history. */
export const labPanelReasonSchema = z
  .string()
  .trim()
  .min(1, 'Give the reason')
  .max(500, 'At most 500 characters');

/**
 * POST /api/cases/:id/lab-panels/:panelId/correction — the whole corrected panel and why. The
 * corrected values become a new panel; the old one is kept, marked superseded by it.
 */
export const correctLabPanelSchema = createLabPanelSchema.extend({ reason: labPanelReasonSchema });
export type CorrectLabPanelRequest = z.input<typeof correctLabPanelSchema>;

/** POST /api/cases/:id/lab-panels/:panelId/withdrawal — the panel is kept, marked withdrawn. */
export const withdrawLabPanelSchema = z.strictObject({ reason: labPanelReasonSchema });
export type WithdrawLabPanelRequest = z.input<typeof withdrawLabPanelSchema>;

export const caseSortFields = [
  'caseCode',
  'board',
  'presenter',
  'primaryDiagnosis',
  'status',
  'updatedAt',
] as const;
export type CaseSortField = (typeof caseSortFields)[number];

export const caseListQuerySchema = z.object({
  page: z.coerce.number().int().min(0).default(0),
  size: z.coerce.number().int().min(1).max(100).default(20),
  sort: z
    .string()
    .regex(/^[A-Za-z]+(:(asc|desc))?$/, 'field or field:asc or field:desc')
    .refine(
      (s) => (caseSortFields as readonly string[]).includes(s.split(':')[0] ?? ''),
      'unknown sort field',
    )
    .default('updatedAt:desc'),
  q: z.string().trim().max(100).optional(),
  boardId: z.uuid().optional(),
  status: z.enum(caseStatuses).optional(),
});
export type CaseListQuery = z.infer<typeof caseListQuerySchema>;

export interface CaseSummary {
  id: string;
  caseCode: string;
  boardId: string;
  boardName: string;
  presenterName: string;
  primaryDiagnosis: PrimaryDiagnosis;
  status: CaseStatus;
  nextMeetingAt: string | null;
  updatedAt: string;
}

export interface LesionView {
  id: string;
  segment: CouinaudSegment;
  diameterMm: number;
  kind: LesionKind;
  /** Structures linked to this lesion (suggested or confirmed): they lose the link with it. */
  linkedStructures?: { name: string; seriesLabel: string; isConfirmed: boolean }[];
}

export interface LabPanelView {
  id: string;
  takenAt: string;
  bilirubin: { value: number; unit: 'mg/dL' | 'umol/L' };
  albumin: { value: number; unit: 'g/dL' | 'g/L' };
  inr: number;
  creatinine: { value: number; unit: 'mg/dL' | 'umol/L' };
  sodiumMmolL: number;
  plateletsE9L: number;
  ascites: (typeof ascitesGrades)[number];
  encephalopathy: (typeof encephalopathyGrades)[number];
  dialysisTwiceInPastWeek: boolean;
  enteredBy: string;
  createdAt: string;
  /** Set once a correction replaced this panel: the new panel, why, who and when. */
  superseded?: LabPanelChangeView & { byPanelId: string };
  /** Set once the panel was withdrawn: why, who and when. */
  withdrawn?: LabPanelChangeView;
  /** The panel this one corrects, if it is a correction. */
  correctsPanelId?: string;
}

export interface LabPanelChangeView {
  reason: string;
  by: string;
  at: string;
}

/**
 * The panel in force among a case's panels: the newest by `takenAt` (then by entry time) of those
 * neither superseded by a correction nor withdrawn; undefined when none is. The liver scores, the
 * case file, the board summary PDF and the pre-procedure checklist all read this one panel.
 */
export function panelInForce<
  P extends {
    takenAt: string | Date;
    createdAt: string | Date;
    superseded?: unknown;
    withdrawn?: unknown;
  },
>(panels: readonly P[]): P | undefined {
  const time = (value: string | Date) => new Date(value).getTime();
  let found: P | undefined;
  for (const panel of panels) {
    if (panel.superseded || panel.withdrawn) continue;
    if (
      !found ||
      time(panel.takenAt) > time(found.takenAt) ||
      (time(panel.takenAt) === time(found.takenAt) && time(panel.createdAt) > time(found.createdAt))
    ) {
      found = panel;
    }
  }
  return found;
}

export interface CaseDetail {
  /** The meeting whose agenda holds the case, while it is not closed; null or absent otherwise. */
  nextMeeting?: { id: string; startsAt: string } | null;
  id: string;
  caseCode: string;
  board: { id: string; name: string };
  presenter: { id: string; displayName: string };
  yearOfBirth: number;
  sex: Sex;
  primaryDiagnosis: PrimaryDiagnosis;
  status: CaseStatus;
  ecogPerformanceStatus: number | null;
  hasVascularInvasion: boolean | null;
  hasExtrahepaticSpread: boolean | null;
  /** The insertion rehearsal's settings in force: the case's own, or the defaults. */
  rehearsal: RehearsalSettings;
  /** Whether the case has its own rehearsal settings. */
  hasOwnRehearsalSettings: boolean;
  lesions: LesionView[];
  /** Newest first, superseded and withdrawn panels included (marked). */
  labPanels: LabPanelView[];
  /** The panel the scores come from (`panelInForce`), or null when none is in force. */
  labPanelInForceId?: string | null;
  /** From the lab panel in force; decision support only. */
  scores: LiverScores;
  /**
   * What the signed-in user may do with this case. `canAddLabPanel`: before the decision the
   * presenter (with `canEdit`); once decided, also the board's proceduralists and nurse
   * coordinators, who record the pre-procedure labs (new panels only: the panels the board saw
   * are never corrected after the decision).
   */
  permissions: { canEdit: boolean; canDelete: boolean; canAddLabPanel: boolean };
  createdAt: string;
  updatedAt: string;
}
