import { UniqueConstraintViolationException } from '@mikro-orm/core';
import type { MikroORM } from '@mikro-orm/postgresql';
import { SamlAssertionSeen } from './saml-assertion.entity';
import { SamlRefusal } from './saml-refusal';

/** What the replay check needs of an accepted assertion. */
export interface AssertionLedgerEntry {
  assertionId: string;
  /** Past this instant (plus clock skew) the assertion is refused on time anyway. */
  expiresAt: Date;
}

type XmlNode = Record<string, unknown>;

function isNode(value: unknown): value is XmlNode {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

function children(node: XmlNode, name: string): XmlNode[] {
  const value = node[name];
  return Array.isArray(value) ? value.filter(isNode) : [];
}

function attribute(node: XmlNode, name: string): string | undefined {
  const attributes = node.$;
  if (!isNode(attributes)) return undefined;
  const value = attributes[name];
  return typeof value === 'string' ? value : undefined;
}

/**
 * The assertion's ID and how long to remember it, from node-saml's parse of the *verified*
 * assertion (xml2js shape, prefixes stripped). SAML 2.0 Profiles §4.1.4.5 asks to keep used IDs
 * for as long as the assertion would be valid by its SubjectConfirmationData NotOnOrAfter; the
 * latest of those and the Conditions' NotOnOrAfter is kept, plus the accepted clock skew.
 */
export function assertionLedgerEntry(
  parsed: unknown,
  acceptedClockSkewMs: number,
): AssertionLedgerEntry {
  const assertion = isNode(parsed) ? parsed.Assertion : undefined;
  if (!isNode(assertion)) throw new SamlRefusal('malformed');
  const assertionId = attribute(assertion, 'ID');
  const limits = [
    ...children(assertion, 'Conditions'),
    ...children(assertion, 'Subject')
      .flatMap((subject) => children(subject, 'SubjectConfirmation'))
      .flatMap((confirmation) => children(confirmation, 'SubjectConfirmationData')),
  ]
    .map((node) => Date.parse(attribute(node, 'NotOnOrAfter') ?? ''))
    .filter((ms) => Number.isFinite(ms));
  if (!assertionId || assertionId.length > 256 || !limits.length)
    throw new SamlRefusal('malformed');
  return { assertionId, expiresAt: new Date(Math.max(...limits) + acceptedClockSkewMs) };
}

/**
 * Records an assertion ID, or refuses it as a replay when it was accepted before. The primary key
 * makes this atomic across server processes: of two copies posted at once, one insert wins.
 */
export async function recordAssertionOnce(
  orm: MikroORM,
  entry: AssertionLedgerEntry,
): Promise<void> {
  const em = orm.em.fork();
  // Expired IDs can go: their assertions would be refused on time already.
  await em.nativeDelete(SamlAssertionSeen, { expiresAt: { $lt: new Date() } });
  try {
    await em.insert(SamlAssertionSeen, entry);
  } catch (error) {
    if (error instanceof UniqueConstraintViolationException) throw new SamlRefusal('replay');
    throw error;
  }
}
