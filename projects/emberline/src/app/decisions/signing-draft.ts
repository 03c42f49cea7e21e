/**
 * What a signer typed, kept in the tab's session storage while they pass the hospital's
 * identity provider again (a full-page round trip that would otherwise lose it). Never the
 * password. Taken back, and removed, when the form opens again.
 */
export function keepSigningDraft(key: string, values: Record<string, string | null>): void {
  try {
    globalThis.sessionStorage?.setItem(key, JSON.stringify(values));
  } catch {
    // Storage full or switched off: the sign-on goes ahead; the text is then typed again.
  }
}

export function takeSigningDraft(key: string): Record<string, string | null> | null {
  try {
    const stored = globalThis.sessionStorage?.getItem(key);
    if (!stored) return null;
    globalThis.sessionStorage.removeItem(key);
    const parsed: unknown = JSON.parse(stored);
    if (typeof parsed !== 'object' || parsed === null) return null;
    const values: Record<string, string | null> = {};
    for (const [name, value] of Object.entries(parsed)) {
      if (typeof value === 'string' || value === null) values[name] = value;
    }
    return values;
  } catch {
    return null;
  }
}
