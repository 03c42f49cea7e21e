import { EntityRepository } from '@mikro-orm/postgresql';
import type { Populate } from '@mikro-orm/core';
import { NotFoundError } from '../../common/errors';
import type { SignedInUser } from '../../common/request-context';
import { visibilityFilter } from '../cases/case-visibility';
import type { NeedlePlan } from './needle-plan.entity';

export class PlanRepository extends EntityRepository<NeedlePlan> {
  /** The plan if the user may see its case; otherwise a NotFoundError (404). */
  findVisibleOrFail<Hint extends string = never>(
    user: SignedInUser,
    id: string,
    populate?: Populate<NeedlePlan, Hint>,
  ): Promise<NeedlePlan> {
    return this.findOneOrFail(
      { id, clinicalCase: visibilityFilter(user) },
      { populate, failHandler: () => new NotFoundError('The plan') },
    ) as Promise<NeedlePlan>;
  }
}
