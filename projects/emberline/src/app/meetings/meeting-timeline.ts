import type { MeetingSummary } from '@emberline/shared';

export interface MeetingTimeline {
  /** In session or still to come, soonest first. */
  upcoming: MeetingSummary[];
  /** Closed or over, latest first. */
  past: MeetingSummary[];
}

const MS_PER_MINUTE = 60_000;

/**
 * Splits meetings into upcoming and past. A meeting in session is upcoming whatever its time; a
 * scheduled one stays upcoming until its planned end, because a board often starts late.
 */
export function meetingTimeline(
  meetings: readonly MeetingSummary[],
  nowMs: number,
): MeetingTimeline {
  const upcoming: MeetingSummary[] = [];
  const past: MeetingSummary[] = [];
  for (const meeting of meetings) {
    const endMs = Date.parse(meeting.startsAt) + meeting.durationMin * MS_PER_MINUTE;
    const isUpcoming =
      meeting.state === 'in-session' || (meeting.state === 'scheduled' && endMs > nowMs);
    (isUpcoming ? upcoming : past).push(meeting);
  }
  const byStart = (a: MeetingSummary, b: MeetingSummary) =>
    Date.parse(a.startsAt) - Date.parse(b.startsAt);
  upcoming.sort(byStart);
  past.sort((a, b) => byStart(b, a));
  return { upcoming, past };
}
