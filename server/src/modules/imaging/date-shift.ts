/**
 * Moving DICOM dates by a whole number of days (the Modified Dates option of PS3.15 E.3.6,
 * from memory): DA is YYYYMMDD (PS3.5 6.2); DT is YYYYMMDD followed by an optional time,
 * fraction and UTC offset, all kept. A value that is not a calendar date answers null: it is
 * removed rather than kept unshifted.
 */

const dayMs = 86_400_000;

function shiftYyyymmdd(yyyymmdd: string, days: number): string | null {
  const match = /^(\d{4})(\d{2})(\d{2})$/.exec(yyyymmdd);
  if (!match) return null;
  const [year, month, day] = [Number(match[1]), Number(match[2]), Number(match[3])];
  const time = Date.UTC(year, month - 1, day);
  const parsed = new Date(time);
  // Date.UTC rolls 20240231 over to March: such a value is not a date.
  if (parsed.getUTCFullYear() !== year || parsed.getUTCMonth() !== month - 1) return null;
  if (parsed.getUTCDate() !== day) return null;
  const shifted = new Date(time + days * dayMs);
  const shiftedYear = shifted.getUTCFullYear();
  if (shiftedYear < 1 || shiftedYear > 9999) return null;
  return (
    String(shiftedYear).padStart(4, '0') +
    String(shifted.getUTCMonth() + 1).padStart(2, '0') +
    String(shifted.getUTCDate()).padStart(2, '0')
  );
}

/** A DA value moved by `days` (whole days, negative into the past), or null. */
export function shiftDicomDate(value: string, days: number): string | null {
  return shiftYyyymmdd(value.trim(), days);
}

/** A DT value whose date part is moved by `days`; the time and offset stay. Null if no date. */
export function shiftDicomDateTime(value: string, days: number): string | null {
  const match = /^(\d{8})(\d{0,6}(?:\.\d{1,6})?(?:[+-]\d{4})?)$/.exec(value.trim());
  if (!match) return null;
  const date = shiftYyyymmdd(match[1], days);
  return date === null ? null : date + match[2];
}
