/**
 * DICOM UIDs of the invented study, derived without randomness from a root of our own.
 *
 * The root is `2.25.` followed by the decimal form of one UUID generated once for Emberline's
 * sample data (f161e11a-6b18-4dbd-8da0-a7b47e1b0895), as DICOM PS3.5 B.2 allows for UIDs under
 * the 2.25 arc. Below it, one arc each for the implementation (0), study (1), series (2), frame
 * of reference (3) and SOP instances (4), then the seed, then for instances the slice number
 * from 1: e.g. `<root>.4.<seed>.17`. At most 64 characters, as PS3.5 9.1 requires.
 */
export const SAMPLE_DATA_UID_ROOT = '2.25.320852165414679928035916950731983882389';

export interface SeriesUids {
  implementationClassUid: string;
  studyInstanceUid: string;
  seriesInstanceUid: string;
  frameOfReferenceUid: string;
  /** One a slice, slice k (from 0) at index k. */
  sopInstanceUids: string[];
}

export function seriesUids(seed: number, sliceCount: number): SeriesUids {
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) {
    throw new RangeError(`The seed must be an integer from 0 to 2³² − 1; got ${seed}.`);
  }
  const uids: SeriesUids = {
    implementationClassUid: `${SAMPLE_DATA_UID_ROOT}.0`,
    studyInstanceUid: `${SAMPLE_DATA_UID_ROOT}.1.${seed}`,
    seriesInstanceUid: `${SAMPLE_DATA_UID_ROOT}.2.${seed}`,
    frameOfReferenceUid: `${SAMPLE_DATA_UID_ROOT}.3.${seed}`,
    sopInstanceUids: Array.from(
      { length: sliceCount },
      (_, slice) => `${SAMPLE_DATA_UID_ROOT}.4.${seed}.${slice + 1}`,
    ),
  };
  const longest = Math.max(...uids.sopInstanceUids.map((uid) => uid.length));
  if (longest > 64) throw new RangeError(`A UID would be ${longest} characters long (limit 64).`);
  return uids;
}
