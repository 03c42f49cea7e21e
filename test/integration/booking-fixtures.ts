/**
 * What the booking tests share besides the demo: decided cases of their own (each with a signed
 * decision, a laboratory panel and a series), a second proceduralist of the North board and a
 * nurse coordinator of the South board. Decisions are written directly: signing them is the
 * decision tests' job, and the booking rules only read them. Every value is invented.
 */
import type { MikroORM } from '@mikro-orm/postgresql';
import { expect } from 'vitest';
import type { BookingUrgency, Role, Specialty, Treatment } from '@emberline/shared';
import { Board } from '../../server/src/modules/boards/board.entity';
import { BoardMembership } from '../../server/src/modules/boards/board-membership.entity';
import { quorumOf } from '../../server/src/modules/board-session/quorum';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { LabPanel } from '../../server/src/modules/cases/lab-panel.entity';
import { Decision } from '../../server/src/modules/decisions/decision.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { hashPassword } from '../../server/src/modules/users/password';
import { User } from '../../server/src/modules/users/user.entity';
import { ApiClient, type TestApp } from '../support/test-app';
import { demoPassword } from '../support/demo';
import { insertSeriesRow } from './plan-fixtures';

export const dayMs = 86_400_000;

/** An account of the invented hospital with one board membership. */
export async function addUser(
  orm: MikroORM,
  fields: {
    email: string;
    displayName: string;
    roles: Role[];
    boardId: string;
    specialty: Specialty;
  },
): Promise<string> {
  const em = orm.em.fork();
  const user = new User(fields.email, fields.displayName);
  user.roles = fields.roles;
  user.passwordHash = await hashPassword(demoPassword);
  em.persist(user);
  em.persist(
    new BoardMembership(
      em.getReference(Board, fields.boardId, { wrapped: true }),
      em.getReference(User, user.id, { wrapped: true }),
      fields.specialty,
    ),
  );
  await em.flush();
  return user.id;
}

export async function signedIn(testApp: TestApp, email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

export interface DecidedCaseOptions {
  caseCode: string;
  boardId: string;
  outcome?: Treatment;
  urgency?: BookingUrgency;
  conditions?: string;
  /** The panel's INR and platelets (×10⁹/L) and when it was taken. */
  inr?: number;
  plateletsE9L?: number;
  labTakenAt?: Date;
  /** Adds a series row (uploaded now). */
  hasSeries?: boolean;
  /** A plan of the case to select (ablation outcomes). */
  selectedPlanId?: string;
  signedAt?: Date;
}

/** A decided case with its signed decision, one laboratory panel and (by default) a series. */
export async function decidedCase(orm: MikroORM, options: DecidedCaseOptions): Promise<string> {
  const em = orm.em.fork();
  const presenter = await em.findOneOrFail(
    BoardMembership,
    { board: options.boardId, user: { roles: { $contains: ['presenting-physician'] } } },
    { populate: ['user'] },
  );
  const signer = await em.findOneOrFail(User, { email: 'proceduralist@emberline.test' });
  const found = new ClinicalCase({
    caseCode: options.caseCode,
    board: em.getReference(Board, options.boardId, { wrapped: true }),
    presenter: em.getReference(User, presenter.user.id, { wrapped: true }),
    yearOfBirth: 1958,
    sex: 'female',
    primaryDiagnosis: 'hcc',
  });
  found.status = 'decided';
  em.persist(found);
  await em.flush();
  return decideExisting(orm, found.id, signer.id, presenter.user.id, options);
}

/** Gives an existing case the decision, panel and series of `decidedCase`, and decides it. */
export async function decideExisting(
  orm: MikroORM,
  caseId: string,
  signerId: string,
  presenterId: string,
  options: Omit<DecidedCaseOptions, 'caseCode' | 'boardId'>,
): Promise<string> {
  const em = orm.em.fork();
  const caseRef = em.getReference(ClinicalCase, caseId, { wrapped: true });
  await em.nativeUpdate(ClinicalCase, { id: caseId }, { status: 'decided' });
  const decision = new Decision({
    clinicalCase: caseRef,
    outcome: options.outcome ?? 'ablation-mw',
    rationale: 'Invented for the booking tests.',
    signer: em.getReference(User, signerId, { wrapped: true }),
    signInMethod: 'local',
    quorum: quorumOf([], []),
  });
  decision.urgency = options.urgency ?? 'routine';
  decision.conditions = options.conditions ?? null;
  if (options.signedAt) decision.signedAt = options.signedAt;
  if (options.selectedPlanId) {
    decision.selectedPlan = em.getReference(NeedlePlan, options.selectedPlanId, { wrapped: true });
    await em.nativeUpdate(NeedlePlan, { id: options.selectedPlanId }, { status: 'selected' });
  }
  em.persist(decision);
  em.persist(
    new LabPanel(caseRef, em.getReference(User, presenterId, { wrapped: true }), {
      takenAt: options.labTakenAt ?? new Date(Date.now() - dayMs),
      bilirubin: { value: 1.1, unit: 'mg/dL' },
      albumin: { value: 3.7, unit: 'g/dL' },
      inr: options.inr ?? 1.2,
      creatinine: { value: 0.9, unit: 'mg/dL' },
      sodiumMmolL: 138,
      plateletsE9L: options.plateletsE9L ?? 150,
      ascites: 'none',
      encephalopathy: 'none',
      dialysisTwiceInPastWeek: false,
    }),
  );
  await em.flush();
  if (options.hasSeries !== false) await insertSeriesRow(orm, caseId, presenterId);
  return caseId;
}

/** The start of an hour `days` from now, UTC (booking times in the tests). */
export function hoursFromNow(days: number, hourUtc: number, minute = 0): Date {
  const date = new Date(Date.now() + days * dayMs);
  date.setUTCHours(hourUtc, minute, 0, 0);
  return date;
}
