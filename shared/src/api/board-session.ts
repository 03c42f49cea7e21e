/**
 * The board's own work during a meeting: presence and quorum, the shared view led by one member,
 * annotations on a series, threaded comments and votes per agenda item, the signed decision and
 * its amendments, and the minutes frozen when the chair closes the meeting.
 *
 * Every Socket.IO event of the `/session` namespace answers with one acknowledgement shape,
 * `SessionAck<T>`: `{ ok: true, data }` or `{ ok: false, problem }`, the problem in the same
 * RFC 9457 form the HTTP API answers.
 */
import { z } from 'zod';
import { bookingUrgencies, type BookingUrgency } from './bookings';
import type { ProblemDetails } from './problem';
import { lpsPointSchema } from './plans';
import type { Specialty } from './roles';
import type { Vec3 } from '../geometry/vector';

// ---------------------------------------------------------------- treatments and votes

/** The treatments a liver-tumour board decides among (the trade's list). */
export const treatments = [
  'resection',
  'transplant',
  'ablation-rf',
  'ablation-mw',
  'cryoablation',
  'tace',
  'tare',
  'sbrt',
  'systemic',
  'surveillance',
  'supportive-care',
] as const;
export type Treatment = (typeof treatments)[number];
export const treatmentLabels: Record<Treatment, string> = {
  resection: 'Resection',
  transplant: 'Transplant listing',
  'ablation-rf': 'Radiofrequency ablation',
  'ablation-mw': 'Microwave ablation',
  cryoablation: 'Cryoablation',
  tace: 'Transarterial chemoembolisation (TACE)',
  tare: 'Transarterial radioembolisation (TARE)',
  sbrt: 'Stereotactic body radiotherapy (SBRT)',
  systemic: 'Systemic therapy',
  surveillance: 'Surveillance',
  'supportive-care': 'Best supportive care',
};
/** Outcomes for which a needle plan is selected. */
export const ablationTreatments: readonly Treatment[] = [
  'ablation-rf',
  'ablation-mw',
  'cryoablation',
];

export const votePositions = ['support', 'oppose', 'abstain'] as const;
export type VotePosition = (typeof votePositions)[number];
export const votePositionLabels: Record<VotePosition, string> = {
  support: 'Support',
  oppose: 'Oppose',
  abstain: 'Abstain',
};

/** A vote option: an assessed plan of the case (its id) or a treatment. */
export const voteOptionSchema = z.union([z.enum(treatments), z.uuid()], {
  error: 'The option is a plan id or a treatment',
});

/**
 * POST /api/agenda-items/:id/votes and `vote:cast`. `position: null` withdraws the member's
 * position on that option. Casting the same position again changes nothing (idempotent).
 */
export const castVoteSchema = z.strictObject({
  option: voteOptionSchema,
  position: z.enum(votePositions).nullable(),
  comment: z.string().trim().max(1000).optional(),
});
export type CastVote = z.infer<typeof castVoteSchema>;

export interface TallyRow {
  option: string;
  /** "Plan A", or the treatment's label. */
  label: string;
  support: number;
  oppose: number;
  abstain: number;
}

export interface VoteView {
  option: string;
  position: VotePosition;
  comment: string | null;
  voter: { id: string; displayName: string };
  castAt: string;
}

/** GET /api/agenda-items/:id/tally; pushed as `vote:tally`. */
export interface TallyView {
  agendaItemId: string;
  /** Every option of the item, plans first, in order, with zero counts too. */
  rows: TallyRow[];
  /** How many members have cast at least one position. */
  voterCount: number;
  /** The signed-in member's own positions. Absent in the broadcast. */
  mine?: VoteView[];
  isClosed: boolean;
}

/** GET /api/cases/:id/votes: the positions cast on one agenda item of the case. */
export interface AgendaItemVotes {
  agendaItemId: string;
  meetingId: string;
  meetingStartsAt: string;
  isClosed: boolean;
  /** By option, then by when cast. */
  votes: VoteView[];
}

// ---------------------------------------------------------------- comments

/** POST /api/agenda-items/:id/comments and `comment:post`. */
export const postCommentSchema = z.strictObject({
  body: z.string().trim().min(1, 'Write something first').max(4000),
  /** Answers another comment of the same item. */
  parentId: z.uuid().optional(),
});
export type PostComment = z.infer<typeof postCommentSchema>;

/** PATCH /api/comments/:id (the chair): marks a comment for the minutes. */
export const markCommentSchema = z.strictObject({ isForMinutes: z.boolean() });

export interface CommentView {
  id: string;
  agendaItemId: string;
  caseId: string;
  parentId: string | null;
  author: { id: string; displayName: string };
  body: string;
  isForMinutes: boolean;
  createdAt: string;
}

// ---------------------------------------------------------------- annotations

export const annotationKinds = ['point', 'line', 'note'] as const;
export type AnnotationKind = (typeof annotationKinds)[number];

/**
 * POST /api/cases/:id/annotations and `annotation:create`: a point, a line (two points) or a
 * note (one point and a text), anchored in patient LPS millimetres on one series of the case.
 */
export const createAnnotationSchema = z
  .strictObject({
    seriesId: z.uuid(),
    kind: z.enum(annotationKinds),
    points: z.array(lpsPointSchema).min(1).max(2),
    text: z.string().trim().max(1000).optional(),
  })
  .superRefine((value, context) => {
    const expected = value.kind === 'line' ? 2 : 1;
    if (value.points.length !== expected) {
      context.addIssue({
        code: 'custom',
        path: ['points'],
        message: `A ${value.kind} has ${expected} point${expected > 1 ? 's' : ''}`,
      });
    }
    if (value.kind === 'note' && !value.text) {
      context.addIssue({ code: 'custom', path: ['text'], message: 'A note needs its text' });
    }
  });
export type CreateAnnotation = z.infer<typeof createAnnotationSchema>;

/** PATCH /api/annotations/:id and `annotation:update`: moves or retexts it (author, chair). */
export const updateAnnotationSchema = z.strictObject({
  points: z.array(lpsPointSchema).min(1).max(2).optional(),
  text: z.string().trim().max(1000).optional(),
});
export type UpdateAnnotation = z.infer<typeof updateAnnotationSchema>;

export interface AnnotationView {
  id: string;
  caseId: string;
  seriesId: string;
  kind: AnnotationKind;
  points: Vec3[];
  text: string | null;
  author: { id: string; displayName: string };
  /** The meeting during which it was made, if any. */
  meetingId: string | null;
  createdAt: string;
  updatedAt: string;
  /** Whether the signed-in user may edit or delete it. Absent in broadcasts. */
  canEdit?: boolean;
}

// ---------------------------------------------------------------- decision

/** POST /api/cases/:id/decision and `decision:record`. */
export const recordDecisionSchema = z
  .strictObject({
    outcome: z.enum(treatments),
    planId: z.uuid().optional(),
    rationale: z.string().trim().min(1, 'Give the rationale').max(4000),
    conditions: z.string().trim().max(2000).optional(),
    /** The signer's password, asked again (local accounts). */
    password: z.string().max(200).optional(),
    /** Recording without quorum: the chair's reason, kept with the decision. */
    quorumOverrideReason: z.string().trim().min(1).max(1000).optional(),
    /** How soon the board wants the procedure; routine when not given. */
    urgency: z.enum(bookingUrgencies).optional(),
  })
  .superRefine((value, context) => {
    const isAblation = ablationTreatments.includes(value.outcome);
    if (isAblation && !value.planId) {
      context.addIssue({
        code: 'custom',
        path: ['planId'],
        message: 'An ablation outcome names the selected plan',
      });
    }
    if (!isAblation && value.planId) {
      context.addIssue({
        code: 'custom',
        path: ['planId'],
        message: 'A plan is selected only for an ablation outcome',
      });
    }
  });
export type RecordDecision = z.infer<typeof recordDecisionSchema>;

/** POST /api/cases/:id/decision/amendments: appended, signed, never edited. */
export const amendDecisionSchema = z.strictObject({
  reason: z.string().trim().min(1, 'Give the reason').max(2000),
  text: z.string().trim().min(1, 'Write the amendment').max(4000),
  password: z.string().max(200).optional(),
});
export type AmendDecision = z.infer<typeof amendDecisionSchema>;

export interface AmendmentView {
  id: string;
  reason: string;
  text: string;
  signer: { id: string; displayName: string };
  signedAt: string;
}

export interface DecisionView {
  id: string;
  caseId: string;
  meetingId: string | null;
  agendaItemId: string | null;
  outcome: Treatment;
  selectedPlan: { id: string; name: string } | null;
  rationale: string;
  conditions: string | null;
  signer: { id: string; displayName: string };
  signedAt: string;
  signInMethod: 'local' | 'saml';
  quorum: QuorumView;
  /** Present when recorded without quorum: the chair's reason. */
  quorumOverrideReason: string | null;
  /** How soon the board wants the procedure (routine unless the signer said otherwise). */
  urgency: BookingUrgency;
  amendments: AmendmentView[];
}

// ---------------------------------------------------------------- presence and quorum

export interface PresentMember {
  userId: string;
  displayName: string;
  specialty: Specialty;
  /** Connected to the room now (false: attended by voting over the API). */
  isInRoom: boolean;
}

export interface QuorumView {
  isMet: boolean;
  required: Specialty[];
  missing: Specialty[];
  presentCount: number;
  /** In words: "Met: every required specialty is present." or what is missing. */
  explanation: string;
}

/** Pushed as `presence` whenever someone joins or leaves. */
export interface PresenceView {
  meetingId: string;
  members: PresentMember[];
  quorum: QuorumView;
  leadUserId: string | null;
}

// ---------------------------------------------------------------- shared view

/** The lead's view, followed by everyone else: `view:update` in, `view:state` out. */
export const viewStateSchema = z.strictObject({
  agendaItemId: z.uuid().nullable(),
  seriesId: z.uuid().nullable(),
  /** Slice positions along each axis, in LPS mm. */
  slice: z
    .strictObject({
      axial: z.number().finite(),
      coronal: z.number().finite(),
      sagittal: z.number().finite(),
    })
    .nullable(),
  window: z
    .strictObject({ width: z.number().finite().positive(), level: z.number().finite() })
    .nullable(),
  camera: z
    .strictObject({
      position: lpsPointSchema,
      focalPoint: lpsPointSchema,
      viewUp: lpsPointSchema,
    })
    .nullable(),
});
export type ViewState = z.infer<typeof viewStateSchema>;

export interface ViewStateEvent {
  meetingId: string;
  state: ViewState;
  leadUserId: string | null;
  /** Increases with every update of the meeting's view; a client drops anything older. */
  sequence: number;
}

export const handOverSchema = z.strictObject({ userId: z.uuid() });

// ---------------------------------------------------------------- the session

export const joinSessionSchema = z.strictObject({ meetingId: z.uuid() });

/** The acknowledgement of `session:join`: everything a client needs to draw the room. */
export interface SessionSnapshot {
  presence: PresenceView;
  view: ViewStateEvent;
  /** What the signed-in member may do here, decided by the server. */
  permissions: SessionPermissions;
}

export interface SessionPermissions {
  isChair: boolean;
  isLead: boolean;
  canVote: boolean;
  canRecordDecision: boolean;
  canComment: boolean;
  canAnnotate: boolean;
  canClose: boolean;
}

/** Pushed as `agenda:changed` when an item closes, the order changes or the meeting closes. */
export interface AgendaChangedEvent {
  meetingId: string;
  reason: 'decision' | 'order' | 'closed' | 'opened';
}

export interface DecisionRecordedEvent {
  meetingId: string | null;
  agendaItemId: string | null;
  decision: DecisionView;
}

export interface AnnotationDeletedEvent {
  id: string;
  caseId: string;
}

/** The one acknowledgement shape of every `/session` event. */
export type SessionAck<T = unknown> =
  { ok: true; data: T } | { ok: false; problem: ProblemDetails };

// ---------------------------------------------------------------- minutes

export interface MinutesAttendance {
  userId: string;
  displayName: string;
  specialty: Specialty | null;
  firstJoinedAt: string;
  lastLeftAt: string | null;
  /** "room" when present in the session, "vote" when attending only by voting over the API. */
  via: 'room' | 'vote';
}

export interface MinutesItem {
  position: number;
  caseId: string;
  caseCode: string;
  presenterName: string;
  plans: { id: string; name: string; status: string; verdict: string | null }[];
  tally: TallyRow[];
  comments: { author: string; body: string; createdAt: string }[];
  decision: DecisionView | null;
}

export interface MinutesContent {
  meetingId: string;
  boardName: string;
  startsAt: string;
  chair: string;
  place: string | null;
  closedAt: string;
  closedBy: string;
  quorum: QuorumView;
  attendance: MinutesAttendance[];
  items: MinutesItem[];
}

/** GET /api/meetings/:id/minutes: the frozen record; `content` never changes once written. */
export interface MinutesView {
  meetingId: string;
  frozenAt: string;
  /** SHA-256 of the stored JSON text of `content`. */
  sha256: string;
  content: MinutesContent;
}
