/**
 * Needle plans through the API on the demo hospital, with the invented CT of sample-data/ on
 * NLB-2026-014 (seeded through the upload code): drafting, listing, changing, submitting and
 * deleting; the refusals, each naming its field (RFC 9457 problem details); visibility by board
 * exactly as for cases (DEVELOPERS.md, "Roles": 404 out of reach, 403 for a forbidden action on a
 * visible case); the audit trail; and the demo plans against the analytic invented anatomy.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  ApplicatorProfileView,
  CaseDetail,
  PlanView,
  ProblemDetails,
  Vec3,
} from '@emberline/shared';
import { TUMOURS } from '../../sample-data/abdomen/organs';
import { BODY_OUTLINE } from '../../sample-data/abdomen/torso';
import { distanceToSegment } from '../../sample-data/abdomen/vector';
import { HEPATIC_VEIN, PORTAL_VEIN, type VesselTree } from '../../sample-data/abdomen/vessel-tree';
import { seedDemoImaging } from '../../server/seeders/demo-imaging';
import {
  demoApplicatorProfiles,
  demoMicrowaveProfileName,
  demoPlans,
  seedDemoPlans,
} from '../../server/seeders/demo-plans';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { User } from '../../server/src/modules/users/user.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment } from './imaging-fixtures';
import { insertSeriesRow, planBody } from './plan-fixtures';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-plans-test-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'plans-test-secret-5b0e91d2c7a84e3f8d6a',
  IMAGING_READ_TIMEOUT_MS: '20000',
};

let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let ids: DemoIds;
let presenter: ApiClient;
let member: ApiClient;
let admin: ApiClient;
/** The invented CT of NLB-2026-014 (northReady). */
let seriesId: string;
/** A series row of NLB-2026-019 (northDraft). */
let otherSeriesId: string;
let microwave: ApplicatorProfileView;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  const response = await client.signIn(email, demoPassword);
  expect(response.status).toBe(200);
  return client;
}

const problem = (body: unknown) => body as ProblemDetails;
const fieldsOf = (body: unknown) => (problem(body).errors ?? []).map((error) => error.path);

async function draft(overrides: Parameters<typeof planBody>[2] = {}): Promise<PlanView> {
  const response = await presenter.post(
    `/api/cases/${ids.northReady}/plans`,
    planBody(seriesId, microwave.id, overrides),
  );
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return response.body as PlanView;
}

async function auditOf(action: string, entityId: string): Promise<AuditEvent[]> {
  return testApp.orm.em
    .fork()
    .find(AuditEvent, { action: action as never, entityId }, { orderBy: { at: 'asc' } });
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  testApp = await startTestApp();
  ids = await resetToDemo(testApp.orm);
  expect(await seedDemoImaging(testApp.orm.em.fork())).toBe(true);
  const em = testApp.orm.em.fork();
  seriesId = (await em.findOneOrFail(ImageSeries, { clinicalCase: ids.northReady })).id;
  const presenterUser = await em.findOneOrFail(User, { email: 'presenter@emberline.test' });
  otherSeriesId = await insertSeriesRow(testApp.orm, ids.northDraft, presenterUser.id);
  presenter = await signedIn('presenter@emberline.test');
  member = await signedIn('member@emberline.test');
  admin = await signedIn('admin@emberline.test');
  const profiles = (await presenter.get('/api/applicator-profiles'))
    .body as ApplicatorProfileView[];
  const found = profiles.find((profile) => profile.name === demoMicrowaveProfileName);
  if (!found) throw new Error('the demo microwave profile is missing');
  microwave = found;
}, 60_000);

afterAll(async () => {
  await testApp.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

describe('drafting a plan', () => {
  it('answers 201 with the plan, its profile name and author; lists and reads it; audited', async () => {
    const body = planBody(seriesId, microwave.id, { name: 'Lateral approach', notes: 'First try' });
    const created = await presenter.post(`/api/cases/${ids.northReady}/plans`, body);
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const plan = created.body as PlanView;
    expect(created.headers.location).toBe(`/api/plans/${plan.id}`);
    expect(plan).toMatchObject({
      caseId: ids.northReady,
      seriesId,
      name: 'Lateral approach',
      status: 'draft',
      notes: 'First try',
      author: { displayName: 'Dr Priya Raman' },
      applicators: [{ ...body.applicators[0], profileName: demoMicrowaveProfileName }],
    });

    const listed = await member.get(`/api/cases/${ids.northReady}/plans`);
    expect(listed.status).toBe(200);
    expect((listed.body as PlanView[]).find((entry) => entry.id === plan.id)).toEqual(plan);
    const proceduralist = await signedIn('proceduralist@emberline.test');
    const read = await proceduralist.get(`/api/plans/${plan.id}`);
    expect(read.status).toBe(200);
    expect(read.body).toEqual(plan);

    expect((await auditOf('plan.create', plan.id)).map((event) => event.actorEmail)).toEqual([
      'presenter@emberline.test',
    ]);
    expect((await auditOf('plan.read', plan.id)).map((event) => event.actorEmail)).toEqual([
      'proceduralist@emberline.test',
    ]);
    const lists = await auditOf('plans.list', ids.northReady);
    expect(lists.at(-1)?.actorEmail).toBe('member@emberline.test');
  });

  it('refuses a power outside the profile’s zone table, naming applicators.N.powerW', async () => {
    // The demo microwave table spans 40–80 W and 180–600 s.
    const response = await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(seriesId, microwave.id, {
        applicators: [
          {
            entry: [-70, 0, 0],
            target: [-30, 0, 0],
            profileId: microwave.id,
            powerW: 60,
            timeS: 360,
          },
          {
            entry: [-70, 5, 0],
            target: [-30, 5, 0],
            profileId: microwave.id,
            powerW: 90,
            timeS: 360,
          },
        ],
      }),
    );
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body)).toEqual(['applicators.1.powerW']);
    expect(problem(response.body).detail).toContain('40–80 W');
  });

  it('refuses a time outside the table and names every fault at once', async () => {
    const response = await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(seriesId, microwave.id, {
        applicators: [
          {
            entry: [-70, 0, 0],
            target: [-30, 0, 0],
            profileId: microwave.id,
            powerW: 39,
            timeS: 601,
          },
        ],
      }),
    );
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body)).toEqual(['applicators.0.powerW', 'applicators.0.timeS']);
  });

  it('accepts the table’s own extremes (the range is inclusive)', async () => {
    const plan = await draft({
      applicators: [
        {
          entry: [-70, 0, 0],
          target: [-30, 0, 0],
          profileId: microwave.id,
          powerW: 40,
          timeS: 600,
        },
      ],
    });
    expect(plan.applicators[0]).toMatchObject({ powerW: 40, timeS: 600 });
  });

  it('refuses an unknown profile and a retired one, naming applicators.N.profileId', async () => {
    const unknown = await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(seriesId, '00000000-0000-4000-8000-000000000000'),
    );
    expect(unknown.status).toBe(400);
    expect(fieldsOf(unknown.body)).toEqual(['applicators.0.profileId']);

    const spare = await admin.post('/api/admin/applicator-profiles', {
      ...demoApplicatorProfiles[0],
      name: 'Spare microwave (to retire)',
    });
    expect(spare.status).toBe(201);
    const spareId = (spare.body as ApplicatorProfileView).id;
    expect(
      (await admin.patch(`/api/admin/applicator-profiles/${spareId}`, { isRetired: true })).status,
    ).toBe(200);
    const retired = await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(seriesId, spareId),
    );
    expect(retired.status).toBe(400);
    expect(fieldsOf(retired.body)).toEqual(['applicators.0.profileId']);
    expect(problem(retired.body).detail).toContain('retired');
  });

  it('refuses a series of another case, naming seriesId', async () => {
    const response = await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(otherSeriesId, microwave.id),
    );
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body)).toEqual(['seriesId']);
  });

  it('refuses an entry equal to the target, naming applicators.N.target', async () => {
    const response = await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(seriesId, microwave.id, {
        applicators: [
          {
            entry: [-40, 0, 0],
            target: [-40, 0, 0],
            profileId: microwave.id,
            powerW: 60,
            timeS: 360,
          },
        ],
      }),
    );
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body)).toEqual(['applicators.0.target']);
  });

  it('refuses a plan without applicators and a name of blanks', async () => {
    const response = await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(seriesId, microwave.id, { name: '   ', applicators: [] }),
    );
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body).sort()).toEqual(['applicators', 'name']);
  });

  it('writes nothing when it refuses', async () => {
    const before = await testApp.orm.em.fork().count(NeedlePlan, {});
    await presenter.post(
      `/api/cases/${ids.northReady}/plans`,
      planBody(seriesId, microwave.id, {
        applicators: [
          {
            entry: [-70, 0, 0],
            target: [-30, 0, 0],
            profileId: microwave.id,
            powerW: 5,
            timeS: 360,
          },
        ],
      }),
    );
    expect(await testApp.orm.em.fork().count(NeedlePlan, {})).toBe(before);
  });
});

describe('changing, submitting and deleting', () => {
  it('changes a draft and audits the fields changed', async () => {
    const plan = await draft();
    const response = await presenter.patch(`/api/plans/${plan.id}`, {
      name: 'Moved entry',
      applicators: [
        {
          entry: [-70, 4, 2],
          target: [-30, 0, 0],
          profileId: microwave.id,
          powerW: 80,
          timeS: 600,
        },
      ],
      notes: null,
    });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body).toMatchObject({
      name: 'Moved entry',
      notes: null,
      status: 'draft',
      applicators: [{ entry: [-70, 4, 2], powerW: 80, timeS: 600 }],
    });
    expect((await auditOf('plan.update', plan.id)).map((event) => event.detail)).toEqual([
      { caseId: ids.northReady, fields: ['applicators', 'name', 'notes'], status: 'draft' },
    ]);
  });

  it('checks changed applicators against the zone table too', async () => {
    const plan = await draft();
    const response = await presenter.patch(`/api/plans/${plan.id}`, {
      applicators: [
        {
          entry: [-70, 0, 0],
          target: [-30, 0, 0],
          profileId: microwave.id,
          powerW: 60,
          timeS: 1200,
        },
      ],
    });
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body)).toEqual(['applicators.0.timeS']);
  });

  it('submits a draft, then refuses to change or delete it (409)', async () => {
    const plan = await draft();
    const submitted = await presenter.patch(`/api/plans/${plan.id}`, { status: 'submitted' });
    expect(submitted.status).toBe(200);
    expect(submitted.body).toMatchObject({ status: 'submitted' });

    const changed = await presenter.patch(`/api/plans/${plan.id}`, { name: 'Too late' });
    expect(changed.status).toBe(409);
    expect(problem(changed.body).detail).toContain('Only a draft plan can be changed');
    const deleted = await presenter.delete(`/api/plans/${plan.id}`);
    expect(deleted.status).toBe(409);
    expect(problem(deleted.body).detail).toContain(
      'Only a draft plan can be deleted; this plan is submitted',
    );
    expect((await presenter.get(`/api/plans/${plan.id}`)).status).toBe(200);
  });

  it('refuses a status other than submitted, naming status', async () => {
    const plan = await draft();
    const response = await presenter.patch(`/api/plans/${plan.id}`, { status: 'selected' });
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body)).toEqual(['status']);
  });

  it('deletes a draft: gone afterwards, and audited', async () => {
    const plan = await draft();
    expect((await presenter.delete(`/api/plans/${plan.id}`)).status).toBe(204);
    expect((await presenter.get(`/api/plans/${plan.id}`)).status).toBe(404);
    expect((await auditOf('plan.delete', plan.id)).map((event) => event.actorEmail)).toEqual([
      'presenter@emberline.test',
    ]);
  });
});

describe('who may see and change plans', () => {
  it('answers 404 to a member of another board, for the list, the plan and every change', async () => {
    const plan = await draft();
    const south = await signedIn('south@emberline.test');
    expect((await south.get(`/api/cases/${ids.northReady}/plans`)).status).toBe(404);
    expect((await south.get(`/api/plans/${plan.id}`)).status).toBe(404);
    expect((await south.patch(`/api/plans/${plan.id}`, { name: 'x' })).status).toBe(404);
    expect((await south.delete(`/api/plans/${plan.id}`)).status).toBe(404);
    expect(
      (await south.post(`/api/cases/${ids.northReady}/plans`, planBody(seriesId, microwave.id)))
        .status,
    ).toBe(404);
  });

  it('answers 404 to the coordinator for a case not yet decided, as for the case itself', async () => {
    const plan = await draft();
    const coordinator = await signedIn('coordinator@emberline.test');
    expect((await coordinator.get(`/api/cases/${ids.northReady}`)).status).toBe(404);
    expect((await coordinator.get(`/api/cases/${ids.northReady}/plans`)).status).toBe(404);
    expect((await coordinator.get(`/api/plans/${plan.id}`)).status).toBe(404);
  });

  it('answers 403 to a board member who sees the case but may not change its plans', async () => {
    const plan = await draft();
    expect(
      (await member.post(`/api/cases/${ids.northReady}/plans`, planBody(seriesId, microwave.id)))
        .status,
    ).toBe(403);
    expect((await member.patch(`/api/plans/${plan.id}`, { name: 'x' })).status).toBe(403);
    expect((await member.delete(`/api/plans/${plan.id}`)).status).toBe(403);
  });

  it('lets the author and the case’s new presenter change a draft, and nobody else', async () => {
    // A second presenting physician of the North board, who does not present this case yet.
    const account = await admin.post('/api/admin/users', {
      email: 'second.presenter@emberline.test',
      displayName: 'Dr Second Presenter',
      roles: ['presenting-physician'],
      password: demoPassword,
    });
    expect(account.status).toBe(201);
    const secondId = (account.body as { id: string }).id;
    expect(
      (
        await admin.post(`/api/admin/boards/${ids.northBoard}/members`, {
          userId: secondId,
          specialty: 'hepatology',
        })
      ).status,
    ).toBe(204);
    const second = await signedIn('second.presenter@emberline.test');

    const created = await presenter.post('/api/cases', {
      caseCode: 'NLB-2026-150',
      boardId: ids.northBoard,
      yearOfBirth: 1970,
      sex: 'female',
      primaryDiagnosis: 'hcc',
    });
    const caseId = (created.body as CaseDetail).id;
    const presenterId = (created.body as CaseDetail).presenter.id;
    const caseSeries = await insertSeriesRow(testApp.orm, caseId, presenterId);
    const planned = await presenter.post(
      `/api/cases/${caseId}/plans`,
      planBody(caseSeries, microwave.id),
    );
    const planId = (planned.body as PlanView).id;
    expect((await second.patch(`/api/plans/${planId}`, { name: 'Not yours' })).status).toBe(403);
    expect(
      (await second.post(`/api/cases/${caseId}/plans`, planBody(caseSeries, microwave.id))).status,
    ).toBe(403);

    expect((await presenter.patch(`/api/cases/${caseId}`, { presenterId: secondId })).status).toBe(
      200,
    );
    expect((await second.patch(`/api/plans/${planId}`, { name: 'By the presenter' })).status).toBe(
      200,
    );
    expect((await presenter.patch(`/api/plans/${planId}`, { name: 'By the author' })).status).toBe(
      200,
    );
    expect(
      (await presenter.post(`/api/cases/${caseId}/plans`, planBody(caseSeries, microwave.id)))
        .status,
    ).toBe(403);
  });

  it('answers 404 for a malformed or unknown plan id', async () => {
    expect((await presenter.get('/api/plans/not-an-id')).status).toBe(404);
    expect((await presenter.get('/api/plans/00000000-0000-4000-8000-000000000000')).status).toBe(
      404,
    );
  });
});

describe('the demo plans', () => {
  /** Smallest distance from the path (entry to tip) to a tree's vessel walls, mm, sampled every 0.05 mm. */
  function wallDistanceMm(entry: Vec3, tip: Vec3, tree: VesselTree, branch?: string): number {
    const length = Math.hypot(tip[0] - entry[0], tip[1] - entry[1], tip[2] - entry[2]);
    const steps = Math.ceil(length / 0.05);
    let nearest = Infinity;
    for (const candidate of tree.branches) {
      if (branch && candidate.name !== branch) continue;
      for (let index = 1; index < candidate.centreLineLps.length; index++) {
        for (let step = 0; step <= steps; step++) {
          const t = step / steps;
          const point: Vec3 = [
            entry[0] + (tip[0] - entry[0]) * t,
            entry[1] + (tip[1] - entry[1]) * t,
            entry[2] + (tip[2] - entry[2]) * t,
          ];
          const axis = distanceToSegment(
            point,
            candidate.centreLineLps[index - 1],
            candidate.centreLineLps[index],
          );
          nearest = Math.min(nearest, axis - candidate.radiusMm);
        }
      }
    }
    return nearest;
  }

  it('seeds three plans on NLB-2026-014 through the plan rules, once', async () => {
    const em = testApp.orm.em.fork();
    const before = await em.find(NeedlePlan, { clinicalCase: ids.northReady });
    await em.nativeDelete(NeedlePlan, { id: { $in: before.map((plan) => plan.id) } });

    expect(await seedDemoPlans(testApp.orm.em.fork())).toBe(true);
    const listed = (await member.get(`/api/cases/${ids.northReady}/plans`)).body as PlanView[];
    expect(listed.map((plan) => [plan.name, plan.status])).toEqual(
      demoPlans.map((plan) => [plan.name, plan.isSubmitted ? 'submitted' : 'draft']),
    );
    expect(listed.every((plan) => plan.seriesId === seriesId)).toBe(true);
    expect(await seedDemoPlans(testApp.orm.em.fork())).toBe(false);
  });

  it('enters every demo plan on the skin of the invented body outline', () => {
    // The outline is the ellipse (x/72)² + ((y − 2)/58)² = 1 (sample-data/abdomen/torso.ts).
    for (const plan of demoPlans) {
      const [x, y] = plan.entry;
      const radial = Math.hypot(
        (x - BODY_OUTLINE.centreXMm) / BODY_OUTLINE.semiAxisXMm,
        (y - BODY_OUTLINE.centreYMm) / BODY_OUTLINE.semiAxisYMm,
      );
      expect(Math.abs(radial - 1) * BODY_OUTLINE.semiAxisYMm, plan.name).toBeLessThan(1);
    }
  });

  it('centres each zone on a tumour: the tip lies the zone table’s offset beyond its centre', () => {
    for (const plan of demoPlans) {
      const profile = demoApplicatorProfiles.find((entry) => entry.name === plan.profileName);
      const row = profile?.zoneTable.find(
        (entry) => entry.powerW === plan.powerW && entry.timeS === plan.timeS,
      );
      expect(row, plan.name).toBeDefined();
      const length = Math.hypot(
        plan.target[0] - plan.entry[0],
        plan.target[1] - plan.entry[1],
        plan.target[2] - plan.entry[2],
      );
      const offset = row?.tipOffsetMm ?? 0;
      const zoneCentre = plan.target.map(
        (value, axis) => value - ((plan.target[axis] - plan.entry[axis]) * offset) / length,
      ) as Vec3;
      const distances = TUMOURS.map((tumour) =>
        Math.hypot(...zoneCentre.map((value, axis) => value - tumour.centreLps[axis])),
      );
      // Rounded to 0.1 mm per coordinate in the seed: within √3 · 0.05 mm.
      expect(Math.min(...distances), plan.name).toBeLessThan(0.1);
    }
  });

  it('keeps the anterior plan clear of the vessels and passes the lateral one by the right hepatic vein', () => {
    const [anterior, lateral] = demoPlans;
    // Wall distances from the analytic tubes of sample-data/abdomen/vessel-tree.ts.
    for (const tree of [PORTAL_VEIN, HEPATIC_VEIN]) {
      expect(wallDistanceMm(anterior.entry, anterior.target, tree), tree.kind).toBeGreaterThan(5);
    }
    const pastVein = wallDistanceMm(lateral.entry, lateral.target, HEPATIC_VEIN, 'right');
    expect(pastVein).toBeGreaterThan(0);
    expect(pastVein).toBeLessThan(3);
    // The right hepatic vein is 6 mm across: above the 3 mm heat-sink diameter of Lu DSK et al.,
    // "Effect of vessel size on creation of hepatic radiofrequency lesions in pigs", AJR
    // 2002;178:47.
    const rightVein = HEPATIC_VEIN.branches.find((branch) => branch.name === 'right');
    expect((rightVein?.radiusMm ?? 0) * 2).toBeGreaterThan(3);
  });
});

describe('deleting a draft case', () => {
  it('deletes its plans with it', async () => {
    const planned = await presenter.post(
      `/api/cases/${ids.northDraft}/plans`,
      planBody(otherSeriesId, microwave.id),
    );
    expect(planned.status, JSON.stringify(planned.body)).toBe(201);
    const planId = (planned.body as PlanView).id;
    expect((await presenter.delete(`/api/cases/${ids.northDraft}`)).status).toBe(204);
    expect(await testApp.orm.em.fork().count(NeedlePlan, { id: planId })).toBe(0);
    expect((await presenter.get(`/api/plans/${planId}`)).status).toBe(404);
  });
});
