/**
 * Turns the value of an `<input type="datetime-local">` ("2026-12-09T16:00") into ISO 8601 with
 * the browser's offset at that instant ("2026-12-09T16:00:00+01:00"), so that the server stores
 * the moment the user meant, daylight saving included. Returns null for an empty or invalid value.
 */
export function localDateTimeWithOffset(value: string): string | null {
  const match = /^(\d{4}-\d{2}-\d{2})T(\d{2}):(\d{2})(?::(\d{2}))?$/.exec(value);
  if (!match) return null;
  const [, day, hours, minutes, seconds = '00'] = match;
  // A date-time without an offset is read as local time (ECMAScript Date.parse).
  const local = new Date(`${day}T${hours}:${minutes}:${seconds}`);
  if (Number.isNaN(local.getTime())) return null;
  const offsetMin = -local.getTimezoneOffset();
  const sign = offsetMin >= 0 ? '+' : '-';
  const absoluteMin = Math.abs(offsetMin);
  const offsetHours = String(Math.floor(absoluteMin / 60)).padStart(2, '0');
  const offsetMinutes = String(absoluteMin % 60).padStart(2, '0');
  return `${day}T${hours}:${minutes}:${seconds}${sign}${offsetHours}:${offsetMinutes}`;
}
