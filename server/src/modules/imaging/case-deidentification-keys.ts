import { createHmac, randomUUID } from 'node:crypto';

/**
 * The per-case secrets of de-identification, all derived from one server secret that never
 * enters the database:
 *  - a salt for the UID mapping table, which stores HMAC-SHA256(salt, original UID), so that
 *    neither the original UID nor anything that confirms a guess of it is stored;
 *  - the case's date shift, a whole number of days, so that the shifted dates in the database
 *    cannot be moved back without the secret.
 * Losing the secret loses nothing stored; later uploads of an existing case would then get new
 * UIDs and another shift. Keep it with the database's backups, apart from them.
 */
export class CaseDeidentificationKeys {
  /** The shift is between 1 and 10 years back: 366 to 3653 days. */
  static readonly minimumShiftDays = 366;
  static readonly maximumShiftDays = 3653;

  private readonly uidSalt: Buffer;
  readonly dateShiftDays: number;

  constructor(serverSecret: string, caseId: string) {
    this.uidSalt = createHmac('sha256', serverSecret).update(`uid-salt:${caseId}`).digest();
    const shiftBytes = createHmac('sha256', serverSecret).update(`date-shift:${caseId}`).digest();
    const span =
      CaseDeidentificationKeys.maximumShiftDays - CaseDeidentificationKeys.minimumShiftDays + 1;
    this.dateShiftDays = -(
      CaseDeidentificationKeys.minimumShiftDays +
      (shiftBytes.readUInt32BE(0) % span)
    );
  }

  /** The key of the mapping table for an original UID: 64 hex digits. */
  hashOfUid(originalUid: string): string {
    return createHmac('sha256', this.uidSalt).update(originalUid).digest('hex');
  }
}

/**
 * A new UID under the 2.25 root, from a random UUID read as one 128-bit decimal integer
 * (ITU-T X.667, PS3.5 B.2): at most 44 characters.
 */
export function newUuidDerivedUid(): string {
  return `2.25.${BigInt(`0x${randomUUID().replace(/-/g, '')}`).toString(10)}`;
}
