/**
 * What saving a profile did, for the list's status line: created, saved, or saved as a new
 * version because assessments used the one edited (they keep it).
 */
export function profileSaveMessage(
  saved: { name: string; version: number },
  before: { version: number } | null,
): string {
  if (!before) return `${saved.name} created.`;
  return saved.version > before.version
    ? `${saved.name} saved as version ${saved.version}; earlier assessments keep version ${before.version}.`
    : `${saved.name} saved.`;
}
