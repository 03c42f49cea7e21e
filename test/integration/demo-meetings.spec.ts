/**
 * The demo's meetings, seeded through the product's own services: an upcoming North meeting with
 * NLB-2026-014 first and NLB-2026-027 on its agenda, and a closed meeting whose frozen minutes
 * hold the signed decision of NLB-2026-022.
 */
import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type {
  CaseDetail,
  DecisionView,
  MeetingSummary,
  MeetingView,
  MinutesView,
} from '@emberline/shared';
import { seedDemoMeetings } from '../../server/seeders/demo-meetings';
import { resetToDemo, demoPassword, type DemoIds } from '../support/demo';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';

let testApp: TestApp;
let ids: DemoIds;
let member: ApiClient;

beforeAll(async () => {
  testApp = await startTestApp();
  ids = await resetToDemo(testApp.orm);
  expect(await seedDemoMeetings(testApp.orm.em.fork())).toBe(true);
  member = new ApiClient(testApp.app);
  expect((await member.signIn('member@emberline.test', demoPassword)).status).toBe(200);
});

afterAll(async () => {
  await testApp?.close();
});

describe('the demo meetings', () => {
  it('run once', async () => {
    expect(await seedDemoMeetings(testApp.orm.em.fork())).toBe(false);
  });

  it('put NLB-2026-014 first and NLB-2026-027 second on the upcoming meeting', async () => {
    const meetings = (await member.get('/api/meetings')).body as MeetingSummary[];
    const upcoming = meetings.filter((meeting) => meeting.state === 'scheduled');
    expect(upcoming).toHaveLength(1);
    const view = (await member.get(`/api/meetings/${upcoming[0].id}`)).body as MeetingView;
    expect(view.agenda.map((item) => item.caseCode)).toEqual(['NLB-2026-014', 'NLB-2026-027']);
    expect(view.agenda.every((item) => item.caseStatus === 'on-agenda')).toBe(true);
    expect(view.requiredSpecialties).toEqual([
      'hepatology',
      'diagnostic-radiology',
      'interventional-radiology',
    ]);
    expect(new Date(view.startsAt).getTime()).toBeGreaterThan(Date.now());
  });

  it('close a past meeting with frozen minutes holding the decision of NLB-2026-022', async () => {
    const meetings = (await member.get('/api/meetings')).body as MeetingSummary[];
    const closed = meetings.filter((meeting) => meeting.state === 'closed');
    expect(closed).toHaveLength(1);
    const response = await member.get(`/api/meetings/${closed[0].id}/minutes`);
    expect(response.status).toBe(200);
    const minutes = response.body as MinutesView;
    const stored = JSON.stringify(minutes.content);
    // The digest is of the stored text; key order is kept by JSON parse and stringify.
    expect(createHash('sha256').update(stored).digest('hex')).toBe(minutes.sha256);
    expect(minutes.content.attendance).toHaveLength(3);
    expect(minutes.content.quorum.isMet).toBe(true);
    const [item] = minutes.content.items;
    expect(item.caseCode).toBe('NLB-2026-022');
    expect(item.decision?.outcome).toBe('tace');
    expect(item.decision?.signer.displayName).toBe('Dr Mei Tanaka');
    expect(item.tally.find((row) => row.option === 'tace')?.support).toBe(3);
    expect(item.comments).toHaveLength(1);
    const decision = (await member.get(`/api/cases/${ids.northDecided}/decision`))
      .body as DecisionView;
    expect(decision.quorum.isMet).toBe(true);
    const decided = (await member.get(`/api/cases/${ids.northDecided}`)).body as CaseDetail;
    expect(decided.status).toBe('decided');
    expect(decided.permissions.canEdit).toBe(false);
  });
});
