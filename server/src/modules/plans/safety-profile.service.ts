import type { EntityManager } from '@mikro-orm/postgresql';
import { LockMode } from '@mikro-orm/core';
import {
  safetyProfileBodySchema,
  stableJson,
  type SafetyProfileBody,
  type SafetyProfileView,
} from '@emberline/shared';
import { ConflictError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { safetyProfileBody } from './profile-content';
import { SafetyProfile } from './safety-profile.entity';
import { SafetyProfileVersion } from './safety-profile-version.entity';

/**
 * Safety profiles: administrators create and replace them; one is the
 * default that new assessments use. Making a profile the default clears the previous one in
 * the same transaction; the default cannot simply be unmarked (another must take its place),
 * so once there is a default there always is one.
 */
export class SafetyProfileService {
  constructor(private readonly em: EntityManager) {}

  async list(): Promise<SafetyProfileView[]> {
    const profiles = await this.em.find(
      SafetyProfile,
      {},
      { orderBy: { isDefault: 'desc', name: 'asc' } },
    );
    return profiles.map(toSafetyProfileView);
  }

  async get(id: string): Promise<SafetyProfileView> {
    return toSafetyProfileView(await this.find(this.em, id));
  }

  async getDefault(): Promise<SafetyProfileView> {
    const profile = await this.em.findOne(SafetyProfile, { isDefault: true });
    if (!profile) throw new NotFoundError('A default safety profile');
    return toSafetyProfileView(profile);
  }

  async create(actor: Actor, body: SafetyProfileBody): Promise<SafetyProfileView> {
    const created = await this.em.transactional(async (em) => {
      await assertNameFree(em, body.name, null);
      const { isDefault, ...fields } = body;
      const profile = new SafetyProfile(fields);
      // The first profile is the default whatever the body says: assessments need one.
      const isFirst = (await em.count(SafetyProfile, {})) === 0;
      profile.isDefault = isDefault === true || isFirst;
      if (profile.isDefault) await clearDefault(em, profile.id);
      em.persist(profile);
      recordAudit(em, actor, {
        action: 'safety-profile.create',
        entityType: 'safety-profile',
        entityId: profile.id,
        detail: { isDefault: profile.isDefault },
      });
      return profile;
    });
    return toSafetyProfileView(created);
  }

  /**
   * PATCH: the fields given replace the profile's; `isDefault` omitted leaves it as it is. When
   * an assessment has used the current version, a change of thresholds makes the next version
   * (the used one stays frozen in `safety_profile_version`).
   */
  async update(
    actor: Actor,
    id: string,
    patch: Partial<SafetyProfileBody>,
  ): Promise<SafetyProfileView> {
    const replaced = await this.em.transactional(async (em) => {
      const profile = await em.findOne(SafetyProfile, id, {
        lockMode: LockMode.PESSIMISTIC_WRITE,
      });
      if (!profile) throw new NotFoundError('The safety profile');
      const merged = safetyProfileBodySchema.safeParse({ ...safetyProfileBody(profile), ...patch });
      if (!merged.success) {
        const errors = merged.error.issues.map((issue) => ({
          path: issue.path.join('.'),
          message: issue.message,
        }));
        throw new ValidationError(errors.map((e) => `${e.path}: ${e.message}`).join('; '), errors);
      }
      const body = merged.data;
      if (body.name !== profile.name) await assertNameFree(em, body.name, profile.id);
      const { isDefault, ...fields } = body;
      if (isDefault === false && profile.isDefault) {
        throw new ConflictError(
          'This is the default safety profile; make another profile the default instead.',
        );
      }
      if (isDefault === true && !profile.isDefault) {
        await clearDefault(em, profile.id);
        profile.isDefault = true;
      }
      const isChanged = stableJson(safetyProfileBody(profile)) !== stableJson(fields);
      const isVersionUsed =
        isChanged &&
        (await em.count(SafetyProfileVersion, { profile: profile.id, version: profile.version })) >
          0;
      Object.assign(profile, fields);
      if (isVersionUsed) profile.version += 1;
      recordAudit(em, actor, {
        action: 'safety-profile.update',
        entityType: 'safety-profile',
        entityId: profile.id,
        detail: { isDefault: profile.isDefault, version: profile.version },
      });
      return profile;
    });
    return toSafetyProfileView(replaced);
  }

  private async find(em: EntityManager, id: string): Promise<SafetyProfile> {
    const profile = await em.findOne(SafetyProfile, id);
    if (!profile) throw new NotFoundError('The safety profile');
    return profile;
  }
}

/**
 * Unmarks every other default before the new one is written (the partial unique index
 * `safety_profile_single_default` would refuse two at once, in whatever order a flush wrote them).
 */
async function clearDefault(em: EntityManager, exceptId: string): Promise<void> {
  await em.nativeUpdate(
    SafetyProfile,
    { isDefault: true, id: { $ne: exceptId } },
    { isDefault: false, updatedAt: new Date() },
  );
}

async function assertNameFree(
  em: EntityManager,
  name: string,
  exceptId: string | null,
): Promise<void> {
  const taken = await em.count(SafetyProfile, {
    name,
    ...(exceptId ? { id: { $ne: exceptId } } : {}),
  });
  if (taken) {
    throw new ConflictError(`A safety profile is called "${name}" already; choose another name.`);
  }
}

export function toSafetyProfileView(profile: SafetyProfile): SafetyProfileView {
  return {
    id: profile.id,
    name: profile.name,
    structureRules: profile.structureRules,
    marginTargetMm: profile.marginTargetMm,
    marginTargetSource: profile.marginTargetSource,
    marginMinimumMm: profile.marginMinimumMm,
    marginMinimumSource: profile.marginMinimumSource,
    heatSinkDiameterMm: profile.heatSinkDiameterMm,
    heatSinkDistanceMm: profile.heatSinkDistanceMm,
    heatSinkKinds: profile.heatSinkKinds,
    heatSinkSource: profile.heatSinkSource,
    maximumAngulationDeg: profile.maximumAngulationDeg,
    angulationSource: profile.angulationSource,
    minimumParenchymaBeforeTumourMm: profile.minimumParenchymaBeforeTumourMm,
    parenchymaSource: profile.parenchymaSource,
    maximumCapsuleCrossings: profile.maximumCapsuleCrossings,
    capsuleSource: profile.capsuleSource,
    physicsToleranceMm: profile.physicsToleranceMm,
    physicsToleranceSource: profile.physicsToleranceSource,
    rehearsalToleranceMm: profile.rehearsalToleranceMm,
    rehearsalToleranceSource: profile.rehearsalToleranceSource,
    isDefault: profile.isDefault,
    version: profile.version,
    createdAt: profile.createdAt.toISOString(),
    updatedAt: profile.updatedAt.toISOString(),
  };
}
