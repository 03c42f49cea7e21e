import { randomUUID } from 'node:crypto';
import type { EntityManager } from '@mikro-orm/postgresql';
import { newUuidDerivedUid, type CaseDeidentificationKeys } from './case-deidentification-keys';
import { UidReplacement } from './uid-replacement.entity';

/**
 * The case's replacement of each original UID: looked up by salted hash, created when new.
 * Concurrent uploads of one case agree: a new row is inserted "on conflict do nothing" and the
 * table is read again, so the first writer's replacement wins for everyone.
 */
export async function resolveUidReplacements(
  em: EntityManager,
  caseId: string,
  keys: CaseDeidentificationKeys,
  originals: readonly string[],
): Promise<Map<string, string>> {
  const hashByOriginal = new Map(originals.map((uid) => [uid, keys.hashOfUid(uid)]));
  const hashes = [...new Set(hashByOriginal.values())];
  if (hashes.length === 0) return new Map();
  const replacementByHash = async (wanted: string[]) =>
    new Map(
      (
        await em.find(
          UidReplacement,
          { clinicalCase: caseId, originalHash: { $in: wanted } },
          { disableIdentityMap: true },
        )
      ).map((row) => [row.originalHash, row.replacementUid]),
    );
  const known = await replacementByHash(hashes);
  const missing = hashes.filter((hash) => !known.has(hash));
  if (missing.length) {
    const now = new Date();
    await em
      .createQueryBuilder(UidReplacement)
      .insert(
        missing.map((originalHash) => ({
          id: randomUUID(),
          clinicalCase: caseId,
          originalHash,
          replacementUid: newUuidDerivedUid(),
          createdAt: now,
          updatedAt: now,
        })),
      )
      .onConflict(['clinicalCase', 'originalHash'])
      .ignore()
      .execute();
    for (const [hash, replacement] of await replacementByHash(missing))
      known.set(hash, replacement);
  }
  const result = new Map<string, string>();
  for (const [original, hash] of hashByOriginal) {
    const replacement = known.get(hash);
    if (!replacement) throw new Error('a UID replacement was not stored');
    result.set(original, replacement);
  }
  return result;
}
