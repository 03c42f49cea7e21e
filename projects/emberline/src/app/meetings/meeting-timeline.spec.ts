import type { MeetingSummary } from '@emberline/shared';
import { meetingTimeline } from './meeting-timeline';

// Invented meetings; only start, duration and state matter to the split.
function meeting(id: string, startsAt: string, state: MeetingSummary['state']): MeetingSummary {
  return {
    id,
    boardId: 'board-1',
    boardName: 'Liver board',
    startsAt,
    durationMin: 60,
    chair: { id: 'user-1', displayName: 'Dr Chair' },
    place: null,
    state,
    agendaCount: 0,
  };
}

const nowMs = Date.parse('2026-12-02T12:00:00Z');

describe('meetingTimeline', () => {
  it('puts later scheduled meetings upcoming, soonest first', () => {
    const { upcoming, past } = meetingTimeline(
      [
        meeting('late', '2026-12-20T09:00:00Z', 'scheduled'),
        meeting('soon', '2026-12-03T09:00:00Z', 'scheduled'),
      ],
      nowMs,
    );
    expect(upcoming.map((m) => m.id)).toEqual(['soon', 'late']);
    expect(past).toEqual([]);
  });

  it('keeps a scheduled meeting upcoming until its planned end', () => {
    // Started 30 min ago, lasts 60 min.
    const { upcoming } = meetingTimeline(
      [meeting('now', '2026-12-02T11:30:00Z', 'scheduled')],
      nowMs,
    );
    expect(upcoming.map((m) => m.id)).toEqual(['now']);
  });

  it('puts a meeting in session upcoming even past its planned end', () => {
    const { upcoming } = meetingTimeline(
      [meeting('long', '2026-12-02T08:00:00Z', 'in-session')],
      nowMs,
    );
    expect(upcoming.map((m) => m.id)).toEqual(['long']);
  });

  it('puts closed and over meetings in the past, latest first', () => {
    const { upcoming, past } = meetingTimeline(
      [
        meeting('old', '2026-11-01T09:00:00Z', 'closed'),
        meeting('over', '2026-12-01T09:00:00Z', 'scheduled'),
        meeting('closed-early', '2026-12-10T09:00:00Z', 'closed'),
      ],
      nowMs,
    );
    expect(upcoming).toEqual([]);
    expect(past.map((m) => m.id)).toEqual(['closed-early', 'over', 'old']);
  });
});
