/**
 * What the decision and minutes tests share besides the demo: the board's members by e-mail, a
 * meeting of the North board with cases on its agenda, and needle plans in the states the board
 * weighs. A plan's `assessed` state is set directly here: running the assessment engine is the
 * assessments tests' job, and the board's rules only read the state. Every value is invented.
 */
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect } from 'vitest';
import type {
  ApplicatorProfileView,
  BoardMemberView,
  MeetingView,
  PlanStatus,
  PlanView,
} from '@emberline/shared';
import { demoMicrowaveProfileName } from '../../server/seeders/demo-plans';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import type { ApiClient } from '../support/test-app';
import { insertSeriesRow, planBody } from './plan-fixtures';

/** A member of the board as the board's page lists them, by e-mail address. */
export async function boardMembers(
  client: ApiClient,
  boardId: string,
): Promise<(email: string) => BoardMemberView> {
  const members = (await client.get(`/api/boards/${boardId}/members`)).body as BoardMemberView[];
  return (email) => {
    const found = members.find((member) => member.email === email);
    if (!found) throw new Error(`${email} is not a member of the board`);
    return found;
  };
}

/**
 * A scheduled meeting of the board chaired by `chairId`, with the cases on its agenda in the
 * order given (each ready for board, put there by its presenter). Answers the meeting.
 */
export async function meetingWithAgenda(
  presenter: ApiClient,
  boardId: string,
  chairId: string,
  caseIds: string[],
): Promise<MeetingView> {
  const scheduled = await presenter.post(`/api/boards/${boardId}/meetings`, {
    startsAt: new Date(Date.now() + 86_400_000).toISOString(),
    durationMin: 90,
    chairId,
    place: 'Room 4.12',
  });
  expect(scheduled.status, JSON.stringify(scheduled.body)).toBe(201);
  let view = scheduled.body as MeetingView;
  for (const caseId of caseIds) {
    const added = await presenter.post(`/api/meetings/${view.id}/agenda`, { caseId });
    expect(added.status, JSON.stringify(added.body)).toBe(201);
    view = added.body as MeetingView;
  }
  return view;
}

/**
 * A series row on the case and one plan per entry, drafted by the presenter through the API,
 * then put in the state given.
 */
export async function plansInStates(
  orm: MikroORM,
  presenter: ApiClient,
  presenterId: string,
  caseId: string,
  plans: { name: string; status: PlanStatus }[],
): Promise<{ seriesId: string; plans: PlanView[] }> {
  const seriesId = await insertSeriesRow(orm, caseId, presenterId);
  const profiles = (await presenter.get('/api/applicator-profiles'))
    .body as ApplicatorProfileView[];
  const microwave = profiles.find((profile) => profile.name === demoMicrowaveProfileName);
  if (!microwave) throw new Error('the demo microwave profile is missing');
  const created: PlanView[] = [];
  for (const plan of plans) {
    const response = await presenter.post(
      `/api/cases/${caseId}/plans`,
      planBody(seriesId, microwave.id, { name: plan.name }),
    );
    expect(response.status, JSON.stringify(response.body)).toBe(201);
    const view = response.body as PlanView;
    if (plan.status !== 'draft') {
      await orm.em.fork().nativeUpdate(NeedlePlan, { id: view.id }, { status: plan.status });
    }
    created.push({ ...view, status: plan.status });
  }
  return { seriesId, plans: created };
}

/** The statuses of the case's plans now, by plan id. */
export async function planStatuses(orm: MikroORM, caseId: string): Promise<Map<string, string>> {
  const plans = await orm.em.fork().find(NeedlePlan, { clinicalCase: caseId });
  return new Map(plans.map((plan) => [plan.id, plan.status]));
}
