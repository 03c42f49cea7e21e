/**
 * Applicator and safety profiles through the API: administrators create, change and retire
 * them; clinicians read the profiles they may draft with and the default safety profile. The
 * demo default is checked against published thresholds (Wang X et al., Cardiovasc Intervent
 * Radiol 2013; Shady W et al., J Vasc Interv Radiol 2018; Lu DSK et al., AJR 2002) or common
 * practice, each named beside its check; the refusals name their field (RFC 9457 problem
 * details).
 */
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import type {
  ApplicatorProfileView,
  CreateApplicatorProfile,
  ProblemDetails,
  SafetyProfileView,
} from '@emberline/shared';
import { demoSafetyProfileName } from '../../server/seeders/demo-plans';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { SafetyProfile } from '../../server/src/modules/plans/safety-profile.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo } from '../support/demo';
import { safetyBody } from './plan-fixtures';

let testApp: TestApp;
let admin: ApiClient;
let member: ApiClient;

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  const response = await client.signIn(email, demoPassword);
  expect(response.status).toBe(200);
  return client;
}

const newProfile = (overrides: Partial<CreateApplicatorProfile> = {}): CreateApplicatorProfile => ({
  name: 'Test microwave 15 G',
  modality: 'microwave',
  gaugeG: 15,
  workingLengthMm: 200,
  activeLengthMm: 25,
  zoneTable: [
    { powerW: 50, timeS: 300, zoneLengthMm: 30, zoneWidthMm: 22, tipOffsetMm: 6 },
    { powerW: 70, timeS: 300, zoneLengthMm: 35, zoneWidthMm: 26, tipOffsetMm: 7 },
  ],
  zoneTableSource: 'manufacturer',
  notes: 'Invented for a test.',
  ...overrides,
});

const problem = (body: unknown) => body as ProblemDetails;
const fieldsOf = (body: unknown) => (problem(body).errors ?? []).map((error) => error.path);

beforeAll(async () => {
  testApp = await startTestApp();
});
afterAll(async () => {
  await testApp.close();
});
beforeEach(async () => {
  await resetToDemo(testApp.orm);
  admin = await signedIn('admin@emberline.test');
  member = await signedIn('member@emberline.test');
});

describe('applicator profiles', () => {
  it('creates a profile, answers it by id and lists it to administrators and clinicians', async () => {
    const created = await admin.post('/api/admin/applicator-profiles', newProfile());
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const view = created.body as ApplicatorProfileView;
    expect(view).toMatchObject({ ...newProfile(), isRetired: false });
    expect(created.headers.location).toBe(`/api/admin/applicator-profiles/${view.id}`);

    expect((await admin.get(`/api/admin/applicator-profiles/${view.id}`)).body).toEqual(view);
    const adminList = (await admin.get('/api/admin/applicator-profiles'))
      .body as ApplicatorProfileView[];
    expect(adminList.map((profile) => profile.id)).toContain(view.id);
    const clinicalList = await member.get('/api/applicator-profiles');
    expect(clinicalList.status).toBe(200);
    expect((clinicalList.body as ApplicatorProfileView[]).map((profile) => profile.id)).toContain(
      view.id,
    );

    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: 'applicator-profile.create', entityId: view.id });
    expect(events.map((event) => event.actorEmail)).toEqual(['admin@emberline.test']);
  });

  it('refuses a zone table that holds the same power and time twice, naming the row', async () => {
    const zoneTable = [
      { powerW: 50, timeS: 300, zoneLengthMm: 30, zoneWidthMm: 22, tipOffsetMm: 6 },
      { powerW: 60, timeS: 300, zoneLengthMm: 32, zoneWidthMm: 24, tipOffsetMm: 6 },
      { powerW: 50, timeS: 300, zoneLengthMm: 31, zoneWidthMm: 23, tipOffsetMm: 6 },
    ];
    const response = await admin.post('/api/admin/applicator-profiles', newProfile({ zoneTable }));
    expect(response.status).toBe(400);
    expect(fieldsOf(response.body)).toEqual(['zoneTable.2']);
    expect(problem(response.body).detail).toContain('50 W for 300 s twice');
  });

  it('refuses an empty zone table and a zone wider than 150 mm, naming each field', async () => {
    const empty = await admin.post('/api/admin/applicator-profiles', newProfile({ zoneTable: [] }));
    expect(empty.status).toBe(400);
    expect(fieldsOf(empty.body)).toEqual(['zoneTable']);
    const wide = await admin.post(
      '/api/admin/applicator-profiles',
      newProfile({
        zoneTable: [{ powerW: 50, timeS: 300, zoneLengthMm: 30, zoneWidthMm: 151, tipOffsetMm: 6 }],
      }),
    );
    expect(wide.status).toBe(400);
    expect(fieldsOf(wide.body)).toEqual(['zoneTable.0.zoneWidthMm']);
  });

  it('refuses an active length not shorter than the working length, on create and on change', async () => {
    const created = await admin.post(
      '/api/admin/applicator-profiles',
      newProfile({ workingLengthMm: 20, activeLengthMm: 25 }),
    );
    expect(created.status).toBe(400);
    expect(fieldsOf(created.body)).toEqual(['activeLengthMm']);

    const profile = (await admin.post('/api/admin/applicator-profiles', newProfile()))
      .body as ApplicatorProfileView;
    const changed = await admin.patch(`/api/admin/applicator-profiles/${profile.id}`, {
      workingLengthMm: 25,
    });
    expect(changed.status).toBe(400);
    expect(fieldsOf(changed.body)).toEqual(['workingLengthMm']);
  });

  it('refuses a second profile of the same name with 409', async () => {
    expect((await admin.post('/api/admin/applicator-profiles', newProfile())).status).toBe(201);
    const again = await admin.post('/api/admin/applicator-profiles', newProfile());
    expect(again.status).toBe(409);
    expect(problem(again.body).detail).toContain('Test microwave 15 G');
  });

  it('retires a profile: clinicians no longer see it, administrators still do; audited', async () => {
    const profile = (await admin.post('/api/admin/applicator-profiles', newProfile()))
      .body as ApplicatorProfileView;
    const retired = await admin.patch(`/api/admin/applicator-profiles/${profile.id}`, {
      isRetired: true,
      name: 'Test microwave 15 G (old)',
    });
    expect(retired.status).toBe(200);
    expect(retired.body).toMatchObject({ isRetired: true, name: 'Test microwave 15 G (old)' });
    const clinical = (await member.get('/api/applicator-profiles')).body as ApplicatorProfileView[];
    expect(clinical.map((entry) => entry.id)).not.toContain(profile.id);
    expect(clinical.every((entry) => !entry.isRetired)).toBe(true);
    const all = (await admin.get('/api/admin/applicator-profiles')).body as ApplicatorProfileView[];
    expect(all.find((entry) => entry.id === profile.id)?.isRetired).toBe(true);

    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: 'applicator-profile.update', entityId: profile.id });
    expect(events.map((event) => event.detail)).toEqual([
      { fields: ['isRetired', 'name'], version: 1 },
    ]);
  });

  it('answers 404 for an unknown or malformed profile id', async () => {
    const unknown = '00000000-0000-4000-8000-000000000000';
    expect((await admin.get(`/api/admin/applicator-profiles/${unknown}`)).status).toBe(404);
    expect((await admin.get('/api/admin/applicator-profiles/not-an-id')).status).toBe(404);
    expect(
      (await admin.patch(`/api/admin/applicator-profiles/${unknown}`, { isRetired: true })).status,
    ).toBe(404);
  });

  it('keeps administration to administrators and drafting lists to clinical roles', async () => {
    expect((await member.post('/api/admin/applicator-profiles', newProfile())).status).toBe(403);
    expect((await member.get('/api/admin/applicator-profiles')).status).toBe(403);
    expect((await admin.get('/api/applicator-profiles')).status).toBe(403);
    expect((await new ApiClient(testApp.app).get('/api/applicator-profiles')).status).toBe(401);
  });
});

describe('safety profiles', () => {
  it('seeds a default whose thresholds are the published ones, each with its source', async () => {
    const response = await member.get('/api/safety-profiles/default');
    expect(response.status).toBe(200);
    const profile = response.body as SafetyProfileView;
    expect(profile).toMatchObject({ name: demoSafetyProfileName, isDefault: true });
    // Minimal ablative margin ≥ 5 mm: common practice; Wang X et al., "Margin size is an
    // independent predictor of local tumor progression after ablation of colon cancer liver
    // metastases", Cardiovasc Intervent Radiol 2013;36:166 (2-year local-progression-free rates
    // 26, 46, 74, 80 % for margins 0, 1–5, 6–10, 11–15 mm) and Shady W et al., J Vasc Interv
    // Radiol 2018 (margin ≤ 5 mm predicts progression; none seen above 10 mm).
    expect(profile.marginTargetMm).toBe(5);
    expect(profile.marginTargetSource).toMatch(/Wang.*2013.*Shady.*2018/s);
    // Heat sink: seen at 73 % of veins > 3 mm and none under 3 mm (Lu DSK et al., "Effect of
    // vessel size on creation of hepatic radiofrequency lesions in pigs: assessment of the 'heat
    // sink' effect", AJR 2002;178:47); within 10 mm of the zone is the project's default.
    expect(profile.heatSinkDiameterMm).toBe(3);
    expect(profile.heatSinkDistanceMm).toBe(10);
    expect(profile.heatSinkSource).toContain('Lu DSK');
    // 10 mm from bowel or gallbladder: common practice, from memory [M].
    for (const kind of ['bowel', 'gallbladder'] as const) {
      const rule = profile.structureRules.find((entry) => entry.kind === kind);
      expect(rule, kind).toMatchObject({ minimumClearanceMm: 10, isCritical: true });
      expect(rule?.source).toContain('from memory');
    }
    // Every threshold names where it comes from.
    for (const rule of profile.structureRules) expect(rule.source.length).toBeGreaterThan(0);
    expect(profile.minimumParenchymaBeforeTumourMm).toBe(10);
    expect(profile.maximumCapsuleCrossings).toBe(1);
  });

  it('makes a new profile the default and unmarks the old one; audited', async () => {
    const previous = (await member.get('/api/safety-profiles/default')).body as SafetyProfileView;
    const created = await admin.post(
      '/api/admin/safety-profiles',
      safetyBody('Stricter margins', { marginTargetMm: 10, isDefault: true }),
    );
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const view = created.body as SafetyProfileView;
    expect(view).toMatchObject({ isDefault: true, marginTargetMm: 10 });

    const listed = (await admin.get('/api/admin/safety-profiles')).body as SafetyProfileView[];
    expect(listed.filter((entry) => entry.isDefault).map((entry) => entry.id)).toEqual([view.id]);
    expect(listed.find((entry) => entry.id === previous.id)?.isDefault).toBe(false);
    expect(((await member.get('/api/safety-profiles/default')).body as SafetyProfileView).id).toBe(
      view.id,
    );
    const events = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: 'safety-profile.create', entityId: view.id });
    expect(events.map((event) => event.detail)).toEqual([{ isDefault: true }]);
  });

  it('keeps a single default when two profiles are made the default at the same moment', async () => {
    const answers = await Promise.all([
      admin.post('/api/admin/safety-profiles', safetyBody('Race one', { isDefault: true })),
      admin.post('/api/admin/safety-profiles', safetyBody('Race two', { isDefault: true })),
    ]);
    for (const answer of answers) expect([201, 409]).toContain(answer.status);
    const defaults = await testApp.orm.em.fork().count(SafetyProfile, { isDefault: true });
    expect(defaults).toBe(1);
  });

  it('changes the thresholds with PATCH, and moves the default to it when asked', async () => {
    const created = (
      await admin.post('/api/admin/safety-profiles', safetyBody('Board B thresholds'))
    ).body as SafetyProfileView;
    expect(created.isDefault).toBe(false);
    const replaced = await admin.patch(`/api/admin/safety-profiles/${created.id}`, {
      maximumAngulationDeg: 25,
      isDefault: true,
    });
    expect(replaced.status, JSON.stringify(replaced.body)).toBe(200);
    expect(replaced.body).toMatchObject({ maximumAngulationDeg: 25, isDefault: true });
    expect(await testApp.orm.em.fork().count(SafetyProfile, { isDefault: true })).toBe(1);
    expect(
      (await testApp.orm.em.fork().find(AuditEvent, { action: 'safety-profile.update' })).map(
        (event) => event.entityId,
      ),
    ).toEqual([created.id]);
  });

  it('refuses to unmark the default without another taking its place (409)', async () => {
    const current = (await member.get('/api/safety-profiles/default')).body as SafetyProfileView;
    const response = await admin.patch(`/api/admin/safety-profiles/${current.id}`, {
      isDefault: false,
    });
    expect(response.status).toBe(409);
    expect(problem(response.body).detail).toContain('make another profile the default');
  });

  it('refuses a structure kind twice and a threshold without its source, naming the fields', async () => {
    const rules = [
      { kind: 'bowel', minimumClearanceMm: 10, isCritical: true, source: 'common practice' },
      { kind: 'bowel', minimumClearanceMm: 5, isCritical: false, source: 'common practice' },
    ];
    const twice = await admin.post(
      '/api/admin/safety-profiles',
      safetyBody('Twice', { structureRules: rules as never }),
    );
    expect(twice.status).toBe(400);
    expect(fieldsOf(twice.body)).toEqual(['structureRules.1.kind']);
    const unsourced = await admin.post(
      '/api/admin/safety-profiles',
      safetyBody('Unsourced', { marginTargetSource: ' ' }),
    );
    expect(unsourced.status).toBe(400);
    expect(fieldsOf(unsourced.body)).toEqual(['marginTargetSource']);
  });

  it('answers 404 for the default when there is none, and for an unknown profile', async () => {
    await testApp.orm.em.fork().nativeDelete(SafetyProfile, {});
    expect((await member.get('/api/safety-profiles/default')).status).toBe(404);
    expect(
      (await admin.get('/api/admin/safety-profiles/00000000-0000-4000-8000-000000000000')).status,
    ).toBe(404);
  });
});
