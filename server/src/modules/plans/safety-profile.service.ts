import type { EntityManager } from '@mikro-orm/postgresql';
import type { SafetyProfileBody, SafetyProfileView } from '@emberline/shared';
import { ConflictError, NotFoundError } from '../../common/errors';
import type { Actor } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { SafetyProfile } from './safety-profile.entity';

/**
 * Safety profiles (DESIGN.md §5, §7.5): administrators create and replace them; one is the
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

  /** PUT: the whole body replaces the thresholds; `isDefault` omitted leaves it as it is. */
  async replace(actor: Actor, id: string, body: SafetyProfileBody): Promise<SafetyProfileView> {
    const replaced = await this.em.transactional(async (em) => {
      const profile = await this.find(em, id);
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
      Object.assign(profile, fields);
      recordAudit(em, actor, {
        action: 'safety-profile.update',
        entityType: 'safety-profile',
        entityId: profile.id,
        detail: { isDefault: profile.isDefault },
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
    isDefault: profile.isDefault,
    createdAt: profile.createdAt.toISOString(),
    updatedAt: profile.updatedAt.toISOString(),
  };
}
