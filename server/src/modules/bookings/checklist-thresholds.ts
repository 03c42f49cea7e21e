import type { EntityManager } from '@mikro-orm/postgresql';
import {
  thresholdKeys,
  thresholdLabels,
  type ThresholdKey,
  type ThresholdView,
  type UpdateThreshold,
} from '@emberline/shared';
import { NotFoundError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { User } from '../users/user.entity';
import { ChecklistThreshold } from './checklist-threshold.entity';

const sir =
  'SIR consensus guidelines on periprocedural management of thrombotic and bleeding risk, ' +
  'high-bleeding-risk procedures (Patel IJ et al., J Vasc Interv Radiol 2019;30:1168-1184)';

/**
 * The defaults the migration seeds (module README, "Default thresholds"), written again here so
 * that a database emptied by the tests gets them back on first use. The two laboratory limits are
 * recalled from the SIR guideline, not checked against it; the two ages are local practice.
 */
export const defaultThresholds: Record<
  ThresholdKey,
  { value: number; unit: string; source: string }
> = {
  'inr-max': {
    value: 1.8,
    unit: 'INR',
    source: `${sir}: correct the INR to within 1.5-1.8; the upper end is taken here. From memory: check against the publication and the local protocol.`,
  },
  'platelets-min': {
    value: 50,
    unit: '10^9/L',
    source: `${sir}: transfuse platelets below 50 x 10^9/L. From memory: check against the publication and the local protocol.`,
  },
  'lab-max-age-days': {
    value: 14,
    unit: 'days',
    source:
      'Local practice (Emberline default, no publication): a panel taken within 14 days of the start. Set it to the local protocol.',
  },
  'imaging-max-age-days': {
    value: 30,
    unit: 'days',
    source:
      'Local practice (Emberline default, no publication): a series within 30 days of the start. Set it to the local protocol.',
  },
};

/** Every threshold, in the contract's order; a missing row is written back from the defaults. */
export async function thresholdsInForce(
  em: EntityManager,
): Promise<Map<ThresholdKey, ChecklistThreshold>> {
  let rows = await em.find(ChecklistThreshold, {}, { populate: ['updatedBy'] });
  if (rows.length < thresholdKeys.length) {
    const present = new Set(rows.map((row) => row.key));
    for (const key of thresholdKeys) {
      if (present.has(key)) continue;
      const fallback = defaultThresholds[key];
      await em
        .createQueryBuilder(ChecklistThreshold)
        .insert(new ChecklistThreshold({ key, ...fallback }))
        .onConflict('key')
        .ignore()
        .execute();
    }
    rows = await em.find(ChecklistThreshold, {}, { populate: ['updatedBy'], refresh: true });
  }
  return new Map(rows.map((row) => [row.key, row]));
}

export function toThresholdView(row: ChecklistThreshold): ThresholdView {
  const by = row.updatedBy?.getEntity() ?? null;
  return {
    key: row.key,
    label: thresholdLabels[row.key],
    value: row.value,
    unit: row.unit,
    source: row.source,
    updatedBy: by ? { id: by.id, displayName: by.displayName } : null,
    updatedAt: row.updatedAt.toISOString(),
  };
}

/** The administrators' list and edit of the thresholds (routes in checklist-thresholds.routes.ts). */
export class ChecklistThresholdService {
  constructor(private readonly em: EntityManager) {}

  async list(): Promise<ThresholdView[]> {
    const rows = await thresholdsInForce(this.em);
    return thresholdKeys.flatMap((key) => {
      const row = rows.get(key);
      return row ? [toThresholdView(row)] : [];
    });
  }

  async update(
    user: SignedInUser,
    actor: Actor,
    key: string,
    body: UpdateThreshold,
  ): Promise<ThresholdView> {
    if (!(thresholdKeys as readonly string[]).includes(key))
      throw new NotFoundError('The threshold');
    const rows = await thresholdsInForce(this.em);
    const row = rows.get(key as ThresholdKey);
    if (!row) throw new NotFoundError('The threshold');
    const before = { value: row.value, source: row.source };
    row.value = body.value;
    row.source = body.source;
    row.updatedBy = this.em.getReference(User, user.id, { wrapped: true });
    row.updatedAt = new Date();
    recordAudit(this.em, actor, {
      action: 'checklist-threshold.update',
      entityType: 'checklist-threshold',
      entityId: row.id,
      detail: { key, before, after: { value: body.value, source: body.source } },
    });
    await this.em.flush();
    const [fresh] = await this.em.fork().find(
      ChecklistThreshold,
      { key: row.key },
      {
        populate: ['updatedBy'],
      },
    );
    return toThresholdView(fresh);
  }
}
