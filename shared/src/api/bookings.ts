/**
 * Logistics after the board's decision: the nurse coordinator's queue, procedure bookings with
 * their history, the pre-procedure checklist and its laboratory thresholds, the treatment record
 * and the follow-up imaging. Only nurse coordinators book; everyone else who may see the case
 * reads the bookings.
 */
import { z } from 'zod';
import type { Treatment } from './board-session';
import type { CaseStatus } from './cases';

// ---------------------------------------------------------------- urgency

/** How soon the board wants the procedure, set with the decision (routine when not given). */
export const bookingUrgencies = ['routine', 'priority', 'urgent'] as const;
export type BookingUrgency = (typeof bookingUrgencies)[number];
export const bookingUrgencyLabels: Record<BookingUrgency, string> = {
  routine: 'Routine',
  priority: 'Priority',
  urgent: 'Urgent',
};

/**
 * Decision outcomes that lead to a procedure the coordinator books here: the percutaneous
 * ablations and the transarterial treatments. Surgery, radiotherapy, systemic therapy and
 * surveillance are scheduled elsewhere.
 */
export const bookableTreatments: readonly Treatment[] = [
  'ablation-rf',
  'ablation-mw',
  'cryoablation',
  'tace',
  'tare',
];

// ---------------------------------------------------------------- queue

export const bookingQueueKinds = ['procedure', 'follow-up'] as const;
export type BookingQueueKind = (typeof bookingQueueKinds)[number];

/** GET /api/bookings/queue query. */
export const bookingQueueQuerySchema = z.strictObject({
  boardId: z.uuid().optional(),
  urgency: z.enum(bookingUrgencies).optional(),
  kind: z.enum(bookingQueueKinds).optional(),
  /** Include cases already booked (default: only those waiting). */
  includeBooked: z.enum(['true', 'false']).optional(),
});
export type BookingQueueQuery = z.infer<typeof bookingQueueQuerySchema>;

/** One line of the coordinator's queue. */
export interface BookingQueueItem {
  caseId: string;
  caseCode: string;
  caseStatus: CaseStatus;
  board: { id: string; name: string };
  /** `procedure`: a decided case to book; `follow-up`: a treated case's follow-up imaging. */
  kind: BookingQueueKind;
  outcome: Treatment;
  urgency: BookingUrgency;
  decisionSignedAt: string;
  /** The decision's conditions, as signed (and amended), shown in the queue. */
  conditions: string | null;
  selectedPlan: { id: string; name: string } | null;
  /** The procedure's or follow-up's current booking, when there is one. */
  booking: BookingSummary | null;
  /** Follow-up: the date it is due (proposed or booked). */
  dueDate: string | null;
}

// ---------------------------------------------------------------- booking

export const anaesthesiaKinds = ['general', 'sedation'] as const;
export type AnaesthesiaKind = (typeof anaesthesiaKinds)[number];
export const anaesthesiaLabels: Record<AnaesthesiaKind, string> = {
  general: 'General anaesthesia',
  sedation: 'Sedation',
};

export const bookingKinds = ['procedure', 'follow-up-imaging'] as const;
export type BookingKind = (typeof bookingKinds)[number];

export const bookingStates = ['booked', 'confirmed', 'cancelled', 'done'] as const;
export type BookingState = (typeof bookingStates)[number];
export const bookingStateLabels: Record<BookingState, string> = {
  booked: 'Booked, checklist open',
  confirmed: 'Confirmed',
  cancelled: 'Cancelled',
  done: 'Done',
};

const startsAt = z.iso.datetime({ offset: true, error: 'Give the start as an ISO date and time' });
const durationMin = z
  .number()
  .int('The duration is a whole number of minutes')
  .min(15, 'A booking lasts at least 15 minutes')
  .max(720, 'A booking lasts at most 12 hours');
const room = z.string().trim().min(1, 'Name the room').max(80);
const notes = z.string().trim().max(2000);

/** POST /api/cases/:id/booking: the procedure. */
export const createBookingSchema = z.strictObject({
  startsAt,
  durationMin,
  room,
  /** A proceduralist of the case's board. */
  operatorId: z.uuid('The operator must be a user id'),
  anaesthesia: z.enum(anaesthesiaKinds),
  notes: notes.optional(),
});
export type CreateBooking = z.infer<typeof createBookingSchema>;

/** PATCH /api/cases/:id/booking: a rebooking; the reason is kept in the history. */
export const updateBookingSchema = z
  .strictObject({
    startsAt: startsAt.optional(),
    durationMin: durationMin.optional(),
    room: room.optional(),
    operatorId: z.uuid('The operator must be a user id').optional(),
    anaesthesia: z.enum(anaesthesiaKinds).optional(),
    notes: notes.optional(),
    reason: z.string().trim().min(1, 'Give the reason for the change').max(1000),
  })
  .refine(
    (value) => Object.keys(value).some((key) => key !== 'reason'),
    'Change at least one field of the booking',
  );
export type UpdateBooking = z.infer<typeof updateBookingSchema>;

/** DELETE /api/cases/:id/booking (and the follow-up's): a cancellation, with its reason. */
export const cancelBookingSchema = z.strictObject({
  reason: z.string().trim().min(1, 'Give the reason for the cancellation').max(1000),
});
export type CancelBooking = z.infer<typeof cancelBookingSchema>;

/** POST /api/cases/:id/follow-up: the follow-up imaging appointment. */
export const createFollowUpSchema = z.strictObject({
  startsAt,
  durationMin,
  room,
  modality: z.enum(['ct', 'mri']),
  notes: notes.optional(),
});
export type CreateFollowUp = z.infer<typeof createFollowUpSchema>;

export interface BookingSummary {
  id: string;
  kind: BookingKind;
  state: BookingState;
  startsAt: string;
  durationMin: number;
  room: string;
  operator: { id: string; displayName: string } | null;
}

export interface BookingHistoryEntry {
  action: 'booked' | 'rebooked' | 'cancelled' | 'confirmed' | 'done' | 'override';
  at: string;
  by: { id: string; displayName: string };
  reason: string | null;
  /** For a rebooking: the fields before and after. */
  changes: { field: string; before: string | null; after: string | null }[];
}

export interface NotificationView {
  id: string;
  /** Recipients' roles on the care team, never addresses shown to those who may not see them. */
  to: string[];
  subject: string;
  state: 'queued' | 'sent' | 'failed';
  attempts: number;
  queuedAt: string;
  sentAt: string | null;
}

export interface BookingView extends BookingSummary {
  caseId: string;
  anaesthesia: AnaesthesiaKind | null;
  modality: 'ct' | 'mri' | null;
  /** The selected plan's applicator profile(s), as name and version. */
  applicators: { profileId: string; name: string; version: number }[];
  notes: string | null;
  /** Raised with every change; the invitation's SEQUENCE. */
  sequence: number;
  bookedBy: { id: string; displayName: string };
  checklist: ChecklistView | null;
  history: BookingHistoryEntry[];
  notifications: NotificationView[];
  /**
   * False when the server runs without an SMTP relay: bookings work, but no notification was
   * sent (and `notifications` stays empty).
   */
  isMailEnabled: boolean;
  /**
   * `canEdit`: rebook or cancel (a coordinator of the board, booking not done or cancelled);
   * `canCheck`: tick and override checklist items (the coordinator, and the booking's operator);
   * `canConfirm`: confirm (a coordinator); `canMarkDone`: record the treatment (the operator, once
   * confirmed).
   */
  permissions: { canEdit: boolean; canCheck: boolean; canConfirm: boolean; canMarkDone: boolean };
}

// ---------------------------------------------------------------- checklist

export const checklistItemKeys = [
  'consent',
  'anticoagulation-plan',
  'fasting',
  'recent-imaging',
  'inr',
  'platelets',
  'lab-age',
] as const;
export type ChecklistItemKey = (typeof checklistItemKeys)[number];
/** Items a person ticks; the rest are checked automatically against the case's record. */
export const manualChecklistItems: readonly ChecklistItemKey[] = [
  'consent',
  'anticoagulation-plan',
  'fasting',
];

export const checklistItemLabels: Record<ChecklistItemKey, string> = {
  consent: 'Written consent obtained',
  'anticoagulation-plan': 'Plan for anticoagulant and antiplatelet drugs agreed',
  fasting: 'Fasting instructions given',
  'recent-imaging': 'Recent imaging on file',
  inr: 'INR within the limit',
  platelets: 'Platelet count within the limit',
  'lab-age': 'Laboratory panel recent enough',
};

export const checklistItemStates = ['open', 'met', 'not-met', 'overridden'] as const;
export type ChecklistItemState = (typeof checklistItemStates)[number];

export interface ChecklistItemView {
  key: ChecklistItemKey;
  label: string;
  state: ChecklistItemState;
  /** Automatic items: what was found (e.g. "INR 1.4 on 2026-11-20"), and the threshold. */
  finding: string | null;
  threshold: ThresholdView | null;
  /** Manual items: who ticked it and when. */
  checkedBy: { id: string; displayName: string } | null;
  checkedAt: string | null;
  /** An override: its reason and author, kept. */
  override: { reason: string; by: { id: string; displayName: string }; at: string } | null;
}

export interface ChecklistView {
  items: ChecklistItemView[];
  /** Whether the booking may be confirmed: every item met or overridden. */
  isComplete: boolean;
}

/** PUT /api/bookings/:id/checklist/:key — a manual item ticked or unticked. */
export const checklistTickSchema = z.strictObject({ isMet: z.boolean() });
/** POST /api/bookings/:id/checklist/:key/override — a failed item overridden, with its reason. */
export const checklistOverrideSchema = z.strictObject({
  reason: z.string().trim().min(1, 'Give the reason for the override').max(1000),
});

// ---------------------------------------------------------------- thresholds

export const thresholdKeys = [
  'inr-max',
  'platelets-min',
  'lab-max-age-days',
  'imaging-max-age-days',
] as const;
export type ThresholdKey = (typeof thresholdKeys)[number];
export const thresholdLabels: Record<ThresholdKey, string> = {
  'inr-max': 'Highest INR accepted',
  'platelets-min': 'Lowest platelet count accepted',
  'lab-max-age-days': 'Oldest laboratory panel accepted (days before the start)',
  'imaging-max-age-days': 'Oldest imaging accepted (days before the start)',
};

export interface ThresholdView {
  key: ThresholdKey;
  label: string;
  value: number;
  unit: string;
  /** Where the value comes from: a publication, or "local protocol". */
  source: string;
  updatedBy: { id: string; displayName: string } | null;
  updatedAt: string;
}

/** PUT /api/admin/checklist-thresholds/:key — an administrator's change, with its source. */
export const updateThresholdSchema = z.strictObject({
  value: z.number().positive('The value must be above zero').max(10000),
  source: z.string().trim().min(1, 'Name the source of the value').max(500),
});
export type UpdateThreshold = z.infer<typeof updateThresholdSchema>;

// ---------------------------------------------------------------- treatment and follow-up

/**
 * Complications graded by the Clavien–Dindo classification (Dindo D, Demartines N, Clavien PA.
 * Ann Surg 2004;240:205–213).
 */
export const complicationGrades = ['none', 'I', 'II', 'IIIa', 'IIIb', 'IVa', 'IVb', 'V'] as const;
export type ComplicationGrade = (typeof complicationGrades)[number];
/** The grades in Emberline's own short words; the classification's paper defines them. */
export const complicationGradeLabels: Record<ComplicationGrade, string> = {
  none: 'No complication',
  I: 'Grade I: off the usual course, managed with simple measures only (no specific treatment)',
  II: 'Grade II: needed medicines beyond simple measures, a transfusion or parenteral feeding',
  IIIa: 'Grade IIIa: needed a surgical, endoscopic or radiological intervention, no general anaesthesia',
  IIIb: 'Grade IIIb: needed an intervention under general anaesthesia',
  IVa: 'Grade IVa: life-threatening, intensive care, one organ failing',
  IVb: 'Grade IVb: life-threatening, intensive care, several organs failing',
  V: 'Grade V: death of the patient',
};

export const followUpModalities = ['ct', 'mri'] as const;
export type FollowUpModality = (typeof followUpModalities)[number];
export const followUpModalityLabels: Record<FollowUpModality, string> = {
  ct: 'Contrast-enhanced CT',
  mri: 'Contrast-enhanced MRI',
};

/** POST /api/cases/:id/treatment — the operator marks the procedure done. */
export const recordTreatmentSchema = z
  .strictObject({
    performedAt: startsAt,
    /** Applicators used, as the operator lists them (profile names or free text). */
    applicatorsUsed: z.string().trim().min(1, 'List the applicators used').max(1000),
    deviation: z.string().trim().max(2000).optional(),
    complicationGrade: z.enum(complicationGrades),
    complicationNote: z.string().trim().max(2000).optional(),
  })
  .refine((value) => value.complicationGrade === 'none' || !!value.complicationNote, {
    path: ['complicationNote'],
    message: 'Describe the complication',
  });
export type RecordTreatment = z.infer<typeof recordTreatmentSchema>;

export interface TreatmentView {
  performedAt: string;
  operator: { id: string; displayName: string };
  applicatorsUsed: string;
  deviation: string | null;
  complicationGrade: ComplicationGrade;
  complicationNote: string | null;
  recordedAt: string;
  /** The follow-up imaging proposed at the usual interval. */
  followUp: { proposedDate: string; interval: string; basis: string };
}

/** GET /api/cases/:id/logistics: everything of the Logistics section at once. */
export interface CaseLogisticsView {
  caseId: string;
  caseStatus: CaseStatus;
  outcome: Treatment | null;
  urgency: BookingUrgency | null;
  isBookable: boolean;
  procedure: BookingView | null;
  /** Cancelled and replaced bookings, newest first. */
  past: BookingView[];
  treatment: TreatmentView | null;
  followUp: BookingView | null;
  /** The board's proceduralists, for the operator choice (coordinators only). */
  operators: { id: string; displayName: string }[];
  permissions: { canBook: boolean; canRecordTreatment: boolean };
}
