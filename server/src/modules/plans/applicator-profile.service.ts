import type { EntityManager } from '@mikro-orm/postgresql';
import { LockMode } from '@mikro-orm/core';
import {
  stableJson,
  type ApplicatorProfileView,
  type CreateApplicatorProfile,
  type UpdateApplicatorProfile,
} from '@emberline/shared';
import { ConflictError, NotFoundError, ValidationError } from '../../common/errors';
import type { Actor } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { ApplicatorProfile } from './applicator-profile.entity';
import { ApplicatorProfileVersion } from './applicator-profile-version.entity';
import { snapshotApplicatorProfile } from './profile-content';

/**
 * Applicator profiles: administrators create and change them; clinicians read the ones not
 * retired when drafting a plan. A profile is never deleted, only retired, so the plans that name
 * it stay readable. A change of content (anything an assessment reads) to a version that an
 * assessment used makes the next version; notes and retirement are not content.
 */
export class ApplicatorProfileService {
  constructor(private readonly em: EntityManager) {}

  async list(options: { isRetiredIncluded: boolean }): Promise<ApplicatorProfileView[]> {
    const profiles = await this.em.find(
      ApplicatorProfile,
      options.isRetiredIncluded ? {} : { isRetired: false },
      { orderBy: { name: 'asc' } },
    );
    return profiles.map(toApplicatorProfileView);
  }

  async get(id: string): Promise<ApplicatorProfileView> {
    return toApplicatorProfileView(await this.find(id));
  }

  async create(actor: Actor, body: CreateApplicatorProfile): Promise<ApplicatorProfileView> {
    await this.assertNameFree(this.em, body.name);
    const profile = new ApplicatorProfile(body);
    profile.notes = body.notes ?? null;
    profile.zoneTableReference = body.zoneTableReference ?? null;
    this.em.persist(profile);
    recordAudit(this.em, actor, {
      action: 'applicator-profile.create',
      entityType: 'applicator-profile',
      entityId: profile.id,
    });
    await this.em.flush();
    return toApplicatorProfileView(profile);
  }

  async update(
    actor: Actor,
    id: string,
    body: UpdateApplicatorProfile,
  ): Promise<ApplicatorProfileView> {
    const updated = await this.em.transactional(async (em) => {
      const profile = await em.findOne(ApplicatorProfile, id, {
        lockMode: LockMode.PESSIMISTIC_WRITE,
      });
      if (!profile) throw new NotFoundError('The applicator profile');
      if (body.name !== undefined && body.name !== profile.name)
        await this.assertNameFree(em, body.name);
      const workingLengthMm = body.workingLengthMm ?? profile.workingLengthMm;
      const activeLengthMm = body.activeLengthMm ?? profile.activeLengthMm;
      if (activeLengthMm >= workingLengthMm) {
        const path = body.activeLengthMm === undefined ? 'workingLengthMm' : 'activeLengthMm';
        const message =
          `The active length (${activeLengthMm} mm) must be shorter than the working length ` +
          `(${workingLengthMm} mm).`;
        throw new ValidationError(`${path}: ${message}`, [{ path, message }]);
      }
      const fields = Object.keys(body)
        .filter((key) => body[key as keyof UpdateApplicatorProfile] !== undefined)
        .sort();
      const contentBefore = stableJson(snapshotApplicatorProfile(profile));
      Object.assign(
        profile,
        Object.fromEntries(fields.map((key) => [key, body[key as keyof UpdateApplicatorProfile]])),
      );
      const isContentChanged = stableJson(snapshotApplicatorProfile(profile)) !== contentBefore;
      if (
        isContentChanged &&
        (await em.count(ApplicatorProfileVersion, {
          profile: profile.id,
          version: profile.version,
        })) > 0
      ) {
        profile.version += 1;
      }
      recordAudit(em, actor, {
        action: 'applicator-profile.update',
        entityType: 'applicator-profile',
        entityId: profile.id,
        detail: { fields, version: profile.version },
      });
      return profile;
    });
    return toApplicatorProfileView(updated);
  }

  private async find(id: string): Promise<ApplicatorProfile> {
    const profile = await this.em.findOne(ApplicatorProfile, id);
    if (!profile) throw new NotFoundError('The applicator profile');
    return profile;
  }

  private async assertNameFree(em: EntityManager, name: string): Promise<void> {
    if (await em.count(ApplicatorProfile, { name })) {
      throw new ConflictError(
        `An applicator profile is called "${name}" already; choose another name.`,
      );
    }
  }
}

export function toApplicatorProfileView(profile: ApplicatorProfile): ApplicatorProfileView {
  return {
    id: profile.id,
    name: profile.name,
    modality: profile.modality,
    gaugeG: profile.gaugeG,
    workingLengthMm: profile.workingLengthMm,
    activeLengthMm: profile.activeLengthMm,
    zoneTable: profile.zoneTable,
    zoneTableSource: profile.zoneTableSource,
    zoneTableReference: profile.zoneTableReference,
    version: profile.version,
    notes: profile.notes,
    isRetired: profile.isRetired,
    createdAt: profile.createdAt.toISOString(),
    updatedAt: profile.updatedAt.toISOString(),
  };
}
