import { localDateTimeWithOffset } from './local-date-time';

describe('localDateTimeWithOffset', () => {
  it('names the same instant as the local date and time it was given', () => {
    const iso = localDateTimeWithOffset('2026-12-09T16:00');
    expect(iso).toMatch(/^2026-12-09T16:00:00[+-]\d{2}:\d{2}$/);
    // ECMAScript reads an offset-free date-time as local time, so both must be the same moment.
    expect(Date.parse(iso ?? '')).toBe(new Date(2026, 11, 9, 16, 0, 0).getTime());
  });

  it('keeps seconds when the input gives them', () => {
    expect(localDateTimeWithOffset('2026-06-01T08:05:30')).toMatch(/^2026-06-01T08:05:30[+-]/);
  });

  it('refuses an empty or malformed value', () => {
    expect(localDateTimeWithOffset('')).toBeNull();
    expect(localDateTimeWithOffset('9 December')).toBeNull();
    expect(localDateTimeWithOffset('2026-13-45T99:00')).toBeNull();
  });
});
