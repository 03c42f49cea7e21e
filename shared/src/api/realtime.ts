/**
 * Socket.IO event maps (DEVELOPERS.md, "Naming": `domain:verb`, pushed events
 * `domain:past-tense`). The server authenticates a socket from the same session cookie as the
 * HTTP API and authorises every event against the sender's role and boards.
 */
import type { AssessmentStatus } from './assessments';

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
