import { EntityRepository } from '@mikro-orm/postgresql';
import type { FilterQuery, Populate, QueryOrderMap } from '@mikro-orm/core';
import {
  primaryDiagnosisLabels,
  type CaseListQuery,
  type CaseSortField,
  type PrimaryDiagnosis,
} from '@emberline/shared';
import { NotFoundError } from '../../common/errors';
import type { SignedInUser } from '../../common/request-context';
import { escapeLike } from '../audit/audit.service';
import type { ClinicalCase } from './case.entity';
import { visibilityFilter } from './case-visibility';

const orderByField: Record<
  CaseSortField,
  (direction: 'asc' | 'desc') => QueryOrderMap<ClinicalCase>
> = {
  caseCode: (direction) => ({ caseCode: direction }),
  board: (direction) => ({ board: { name: direction } }),
  presenter: (direction) => ({ presenter: { displayName: direction } }),
  primaryDiagnosis: (direction) => ({ primaryDiagnosis: direction }),
  status: (direction) => ({ status: direction }),
  updatedAt: (direction) => ({ updatedAt: direction }),
};

export class CaseRepository extends EntityRepository<ClinicalCase> {
  /** The case if the user may see it; otherwise a NotFoundError (404), never a 403 that leaks it. */
  findVisibleOrFail<Hint extends string = never>(
    user: SignedInUser,
    id: string,
    populate?: Populate<ClinicalCase, Hint>,
  ): Promise<ClinicalCase> {
    return this.findOneOrFail(
      { $and: [{ id }, visibilityFilter(user)] },
      { populate, failHandler: () => new NotFoundError('The case') },
    ) as Promise<ClinicalCase>;
  }

  /** One page of the cases the filter allows, searched by code, board, presenter or diagnosis. */
  async findVisiblePage(
    visible: FilterQuery<ClinicalCase>,
    query: CaseListQuery,
  ): Promise<[ClinicalCase[], number]> {
    const conditions: FilterQuery<ClinicalCase>[] = [visible];
    if (query.boardId) conditions.push({ board: query.boardId });
    if (query.status) conditions.push({ status: query.status });
    if (query.q) {
      const pattern = `%${escapeLike(query.q)}%`;
      const needle = query.q.toLowerCase();
      const diagnoses = (Object.entries(primaryDiagnosisLabels) as [PrimaryDiagnosis, string][])
        .filter(([id, label]) => id === needle || label.toLowerCase().includes(needle))
        .map(([id]) => id);
      conditions.push({
        $or: [
          { caseCode: { $ilike: pattern } },
          { presenter: { displayName: { $ilike: pattern } } },
          { board: { name: { $ilike: pattern } } },
          ...(diagnoses.length ? [{ primaryDiagnosis: { $in: diagnoses } }] : []),
        ],
      });
    }
    const [field, direction = 'asc'] = query.sort.split(':') as [
      CaseSortField,
      'asc' | 'desc' | undefined,
    ];
    return this.findAndCount(
      { $and: conditions },
      {
        populate: ['board', 'presenter'],
        orderBy: [orderByField[field](direction), { caseCode: 'asc' }],
        limit: query.size,
        offset: query.page * query.size,
      },
    );
  }
}
