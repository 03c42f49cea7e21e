import { describe, expect, it } from 'vitest';
import { panelInForce } from './cases';

/** Invented panels: only their dates and marks matter to the rule. */
const panel = (id: string, takenAt: string, createdAt = takenAt, marks = {}) => ({
  id,
  takenAt,
  createdAt,
  ...marks,
});

describe('panelInForce: the newest by takenAt of the panels neither superseded nor withdrawn', () => {
  it('takes the newest by the date the blood was taken, not by entry order', () => {
    const panels = [
      panel('entered-last', '2026-11-10T08:00:00Z', '2026-11-25T08:00:00Z'),
      panel('taken-last', '2026-11-20T08:00:00Z', '2026-11-21T08:00:00Z'),
    ];
    expect(panelInForce(panels)?.id).toBe('taken-last');
  });

  it('breaks a tie of takenAt by the later entry', () => {
    const panels = [
      panel('first', '2026-11-20T08:00:00Z', '2026-11-20T09:00:00Z'),
      panel('second', '2026-11-20T08:00:00Z', '2026-11-20T10:00:00Z'),
    ];
    expect(panelInForce(panels)?.id).toBe('second');
    expect(panelInForce([...panels].reverse())?.id).toBe('second');
  });

  it('passes over superseded and withdrawn panels, however new', () => {
    const panels = [
      panel('withdrawn', '2026-11-28T08:00:00Z', undefined, { withdrawn: { reason: 'x' } }),
      panel('superseded', '2026-11-27T08:00:00Z', undefined, { superseded: { reason: 'y' } }),
      panel('older', '2026-11-01T08:00:00Z'),
    ];
    expect(panelInForce(panels)?.id).toBe('older');
  });

  it('gives none when every panel is out of force, or there is none', () => {
    expect(panelInForce([])).toBeUndefined();
    expect(
      panelInForce([panel('w', '2026-11-01T08:00:00Z', undefined, { withdrawn: { reason: 'x' } })]),
    ).toBeUndefined();
  });
});
