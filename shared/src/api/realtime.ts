/**
 * Socket.IO event maps (DEVELOPERS.md, "Naming": `domain:verb`, pushed events
 * `domain:past-tense`). The server authenticates a socket from the same session cookie as the
 * HTTP API and authorises every event against the sender's role and boards.
 */
import type { AssessmentStatus } from './assessments';
import type {
  AgendaChangedEvent,
  AnnotationDeletedEvent,
  AnnotationView,
  CastVote,
  CommentView,
  CreateAnnotation,
  DecisionRecordedEvent,
  DecisionView,
  PostComment,
  PresenceView,
  RecordDecision,
  SessionAck,
  SessionSnapshot,
  TallyView,
  UpdateAnnotation,
  ViewState,
  ViewStateEvent,
} from './board-session';

/** Pushed to the room `assessment:<id>` whenever the job moves. */
export interface AssessmentProgressEvent {
  id: string;
  planId: string;
  status: AssessmentStatus;
  /** 0–1. */
  progress: number;
  /** Which stage runs now, in words ("Distance fields", "Bioheat zone" …). */
  stage?: string;
  error?: string;
}

export type WatchAcknowledgement =
  { ok: true; event: AssessmentProgressEvent } | { ok: false; status: number; detail: string };

export interface ServerToClientEvents {
  'assessment:progressed': (event: AssessmentProgressEvent) => void;
}

export interface ClientToServerEvents {
  /** Joins the assessment's room; the acknowledgement carries its current state. */
  'assessment:watch': (
    payload: { assessmentId: string },
    acknowledge: (result: WatchAcknowledgement) => void,
  ) => void;
  'assessment:unwatch': (payload: { assessmentId: string }) => void;
}

/** Events of the `/session` namespace, from the client; each answers with a `SessionAck`. */
export interface SessionClientEvents {
  'session:join': (
    payload: { meetingId: string },
    ack: (result: SessionAck<SessionSnapshot>) => void,
  ) => void;
  'session:leave': (
    payload: { meetingId: string },
    ack: (result: SessionAck<null>) => void,
  ) => void;
  'view:update': (
    payload: { meetingId: string; state: ViewState },
    ack: (result: SessionAck<{ sequence: number }>) => void,
  ) => void;
  'view:hand-over': (
    payload: { meetingId: string; userId: string },
    ack: (result: SessionAck<PresenceView>) => void,
  ) => void;
  'annotation:create': (
    payload: { caseId: string; annotation: CreateAnnotation },
    ack: (result: SessionAck<AnnotationView>) => void,
  ) => void;
  'annotation:update': (
    payload: { id: string; changes: UpdateAnnotation },
    ack: (result: SessionAck<AnnotationView>) => void,
  ) => void;
  'annotation:delete': (payload: { id: string }, ack: (result: SessionAck<null>) => void) => void;
  'comment:post': (
    payload: { agendaItemId: string; comment: PostComment },
    ack: (result: SessionAck<CommentView>) => void,
  ) => void;
  'vote:cast': (
    payload: { agendaItemId: string; vote: CastVote },
    ack: (result: SessionAck<TallyView>) => void,
  ) => void;
  'decision:record': (
    payload: { caseId: string; decision: RecordDecision },
    ack: (result: SessionAck<DecisionView>) => void,
  ) => void;
}

/** Events of the `/session` namespace, pushed to the meeting's room. */
export interface SessionServerEvents {
  presence: (event: PresenceView) => void;
  'view:state': (event: ViewStateEvent) => void;
  'annotation:created': (event: AnnotationView) => void;
  'annotation:updated': (event: AnnotationView) => void;
  'annotation:deleted': (event: AnnotationDeletedEvent) => void;
  'comment:posted': (event: CommentView) => void;
  'vote:tally': (event: TallyView) => void;
  'decision:recorded': (event: DecisionRecordedEvent) => void;
  'agenda:changed': (event: AgendaChangedEvent) => void;
}
