/**
 * Board meetings and their agendas: a board meets (date and time, duration, chair, place or
 * video link); a presenting physician puts a case that is ready for board on a meeting's agenda;
 * the chair orders the agenda and may move an item to another meeting of the board.
 */
import { z } from 'zod';
import type { CaseStatus, PrimaryDiagnosis } from './cases';
import { specialties, type Specialty } from './roles';

export const meetingStates = ['scheduled', 'in-session', 'closed'] as const;
export type MeetingState = (typeof meetingStates)[number];
export const meetingStateLabels: Record<MeetingState, string> = {
  scheduled: 'Scheduled',
  'in-session': 'In session',
  closed: 'Closed',
};

/** POST /api/boards/:id/meetings. */
export const createMeetingSchema = z.strictObject({
  /** ISO 8601 with its offset, e.g. 2026-12-09T16:00:00+01:00. */
  startsAt: z.iso.datetime({ offset: true, error: 'Give the start as an ISO date and time' }),
  durationMin: z
    .number()
    .int('The duration is a whole number of minutes')
    .min(15, 'A meeting lasts at least 15 minutes')
    .max(480, 'A meeting lasts at most 8 hours'),
  chairId: z.uuid('The chair must be a user id'),
  /** A room, or a video link. */
  place: z.string().trim().max(300).optional(),
});
export type CreateMeeting = z.infer<typeof createMeetingSchema>;

/** POST /api/meetings/:id/agenda. */
export const addAgendaItemSchema = z.strictObject({ caseId: z.uuid() });

/** PUT /api/meetings/:id/agenda/order: every item of the agenda, in the new order. */
export const orderAgendaSchema = z.strictObject({
  itemIds: z.array(z.uuid()).min(1).max(200),
});

/** POST /api/agenda-items/:id/move: to another scheduled meeting of the same board. */
export const moveAgendaItemSchema = z.strictObject({ meetingId: z.uuid() });

/** PUT /api/admin/boards/:id/quorum: the specialties that must be present. */
export const boardQuorumSchema = z.strictObject({
  requiredSpecialties: z
    .array(z.enum(specialties))
    .max(specialties.length)
    .refine((list) => new Set(list).size === list.length, 'A specialty appears twice'),
});

export interface AgendaItemView {
  id: string;
  /** 1, 2, … in the agenda's order. */
  position: number;
  caseId: string;
  caseCode: string;
  primaryDiagnosis: PrimaryDiagnosis;
  caseStatus: CaseStatus;
  presenterName: string;
  /** Its decision is signed or its meeting closed: voting has ended. */
  isClosed: boolean;
}

export interface MeetingSummary {
  id: string;
  boardId: string;
  boardName: string;
  startsAt: string;
  durationMin: number;
  chair: { id: string; displayName: string };
  place: string | null;
  state: MeetingState;
  agendaCount: number;
}

export interface MeetingView extends MeetingSummary {
  agenda: AgendaItemView[];
  /** The specialties the board requires for quorum. */
  requiredSpecialties: Specialty[];
}
