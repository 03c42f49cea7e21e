import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CreateLabPanelRequest } from '@emberline/shared';
import { configFromEnvironment } from '../../server/src/config';
import { samlSettingsFromEnvironment } from '../../server/src/modules/saml/saml-settings';
import { startFakeIdp, type FakeIdp } from '../support/fake-idp';
import { User } from '../../server/src/modules/users/user.entity';
import { Board } from '../../server/src/modules/boards/board.entity';
import { Meeting } from '../../server/src/modules/meetings/meeting.entity';
import { Lesion } from '../../server/src/modules/cases/lesion.entity';
import { LabPanel } from '../../server/src/modules/cases/lab-panel.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { demoMicrowaveProfileName } from '../../server/seeders/demo-plans';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { ApplicatorProfile } from '../../server/src/modules/plans/applicator-profile.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { SafetyProfile } from '../../server/src/modules/plans/safety-profile.entity';
import { insertSeriesRow, planBody, safetyBody } from './plan-fixtures';
import { setEnvironment } from './imaging-fixtures';
import { rgbaPng } from './key-image-png';
import { AgendaItem } from '../../server/src/modules/meetings/agenda-item.entity';
import { ItemComment } from '../../server/src/modules/votes/comment.entity';
import { Annotation } from '../../server/src/modules/annotations/annotation.entity';
import { Decision } from '../../server/src/modules/decisions/decision.entity';
import { quorumOf } from '../../server/src/modules/board-session/quorum';
import { ProcedureBooking } from '../../server/src/modules/bookings/booking.entity';

/**
 * Every role and an anonymous client against every route of the foundation, one expected status a
 * cell (DEVELOPERS.md, "Roles": access is per board; a case out of reach answers 404, a forbidden
 * action on a visible case 403; OWASP ASVS 5.0 §8 access control). The board's own routes follow
 * the module READMEs of votes, annotations, decisions and meetings: administrators read a
 * meeting's items and minutes but take no part; nurse coordinators neither vote, comment nor
 * annotate; only proceduralists sign; only the chair marks comments and closes; a closed item or
 * meeting 409. Cells run in order within a role, on a fresh copy of the demo; the deleting
 * routes come last, then the decision and the close, which end the agenda item and the meeting.
 */
const who = [
  'anonymous',
  'admin',
  'presenter',
  'member',
  'proceduralist',
  'coordinator',
  'south',
] as const;
type Who = (typeof who)[number];

interface Context {
  ids: DemoIds;
  lesionId: string;
  memberUserId: string;
  southUserId: string;
  runTag: string;
  /** A series row of northReady, its presenter's draft plan and submitted plan. */
  seriesId: string;
  draftPlanId: string;
  submittedPlanId: string;
  applicatorProfileId: string;
  safetyProfileId: string;
  /** A series row of northReady with nothing on it, for its removal. */
  removableSeriesId: string;
  /** Two lab panels of northDraft: one to correct, one to withdraw. */
  panelToCorrectId: string;
  panelToWithdrawId: string;
  /** A scheduled meeting of the north board, chaired by the proceduralist. */
  meetingId: string;
  proceduralistUserId: string;
  /** A north case on that meeting's agenda (`on-agenda`), its item and a series of it. */
  agendaCaseId: string;
  agendaItemId: string;
  agendaSeriesId: string;
  /** The board member's comment on that item, and their annotation on its series. */
  commentId: string;
  annotationId: string;
  /** A series of the decided case (which has a signed decision here) and the member's annotation on it. */
  decidedSeriesId: string;
  decidedAnnotationId: string;
  /** The board member's key image of the agenda case's series. */
  keyImageId: string;
  /** A meeting of the north board closed by its chair, with its minutes. */
  closedMeetingId: string;
  /** A decided north case (TACE) with a booked procedure, the proceduralist its operator. */
  bookedCaseId: string;
  bookingId: string;
}

interface Route {
  name: string;
  call: (client: ApiClient, context: Context) => Promise<{ status: number }>;
  expected: Record<Who, number>;
}

const labs: CreateLabPanelRequest = {
  takenAt: '2026-11-25',
  bilirubin: { value: 1.2, unit: 'mg/dL' },
  albumin: { value: 3.6, unit: 'g/dL' },
  inr: 1.1,
  creatinine: { value: 0.9, unit: 'mg/dL' },
  sodiumMmolL: 138,
  plateletsE9L: 160,
  ascites: 'none',
  encephalopathy: 'none',
  dialysisTwiceInPastWeek: false,
};

/** POST /api/cases/:id/key-images: multipart, a small PNG and its description, as the viewer sends it. */
async function keepKeyImage(client: ApiClient, caseId: string, seriesId: string) {
  const access = { domain: '127.0.0.1', path: '/', secure: false, script: true };
  if (!client.agent.jar.getCookie('XSRF-TOKEN', access)) await client.get('/api/health');
  const token = client.agent.jar.getCookie('XSRF-TOKEN', access)?.value ?? '';
  return client.agent
    .post(`/api/cases/${caseId}/key-images`)
    .set('Host', '127.0.0.1')
    .set('X-XSRF-TOKEN', token)
    .attach('image', Buffer.from(rgbaPng(8, 8, (x, y) => [x * 30, y * 30, 100, 255])), {
      filename: 'view.png',
      contentType: 'image/png',
    })
    .field(
      'meta',
      JSON.stringify({
        seriesId,
        pane: 'axial',
        caption: 'Matrix key image',
        viewState: {
          cursorLps: [1, 2, 3],
          sliceIndex: 4,
          window: { width: 400, level: 50 },
          camera: null,
          hiddenLabels: [],
          labelOpacity: 0.45,
          planId: null,
          zones: [],
        },
      }),
    );
}

//                     anonymous admin presenter member procedur. coordin. south
const row = (
  a: number,
  ad: number,
  p: number,
  m: number,
  pr: number,
  c: number,
  s: number,
): Record<Who, number> => ({
  anonymous: a,
  admin: ad,
  presenter: p,
  member: m,
  proceduralist: pr,
  coordinator: c,
  south: s,
});

const routes: Route[] = [
  {
    name: 'GET /api/health',
    call: (c) => c.get('/api/health'),
    expected: row(200, 200, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/auth/me',
    call: (c) => c.get('/api/auth/me'),
    expected: row(401, 200, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/boards',
    call: (c) => c.get('/api/boards'),
    expected: row(401, 200, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/boards/:north/members',
    call: (c, x) => c.get(`/api/boards/${x.ids.northBoard}/members`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    name: 'GET /api/cases',
    call: (c) => c.get('/api/cases'),
    expected: row(401, 200, 200, 200, 200, 200, 200),
  },
  {
    name: 'POST /api/cases (North)',
    call: (c, x) =>
      c.post('/api/cases', {
        caseCode: `MX-${x.runTag}`,
        boardId: x.ids.northBoard,
        yearOfBirth: 1960,
        sex: 'male',
        primaryDiagnosis: 'hcc',
      }),
    expected: row(401, 403, 201, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/cases/:north-draft',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDraft}`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'GET /api/cases/:north-decided',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDecided}`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    name: 'GET /api/cases/:south-ready',
    call: (c, x) => c.get(`/api/cases/${x.ids.southReady}`),
    expected: row(401, 404, 404, 404, 404, 404, 200),
  },
  {
    name: 'PATCH /api/cases/:north-draft',
    call: (c, x) => c.patch(`/api/cases/${x.ids.northDraft}`, { ecogPerformanceStatus: 1 }),
    expected: row(401, 404, 200, 403, 403, 404, 404),
  },
  {
    name: 'PATCH /api/cases/:south-ready',
    call: (c, x) => c.patch(`/api/cases/${x.ids.southReady}`, { ecogPerformanceStatus: 1 }),
    expected: row(401, 404, 404, 404, 404, 404, 403),
  },
  {
    name: 'POST /api/cases/:north-draft/lesions',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northDraft}/lesions`, {
        segment: 'II',
        diameterMm: 9,
        kind: 'metastasis',
      }),
    expected: row(401, 404, 201, 403, 403, 404, 404),
  },
  {
    name: 'POST /api/cases/:north-draft/lab-panels',
    call: (c, x) => c.post(`/api/cases/${x.ids.northDraft}/lab-panels`, labs),
    expected: row(401, 404, 201, 403, 403, 404, 404),
  },
  {
    name: 'PATCH /api/cases/:north-draft/lesions/:lesion',
    call: (c, x) =>
      c.patch(`/api/cases/${x.ids.northDraft}/lesions/${x.lesionId}`, { diameterMm: 14 }),
    expected: row(401, 404, 200, 403, 403, 404, 404),
  },
  {
    name: 'POST /api/cases/:north-draft/lab-panels/:panel/correction',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northDraft}/lab-panels/${x.panelToCorrectId}/correction`, {
        ...labs,
        reason: 'Matrix correction',
      }),
    expected: row(401, 404, 201, 403, 403, 404, 404),
  },
  {
    name: 'POST /api/cases/:north-draft/lab-panels/:panel/withdrawal',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northDraft}/lab-panels/${x.panelToWithdrawId}/withdrawal`, {
        reason: 'Matrix withdrawal',
      }),
    expected: row(401, 404, 200, 403, 403, 404, 404),
  },
  {
    name: 'GET /api/series/:north-ready-series/removal',
    call: (c, x) => c.get(`/api/series/${x.seriesId}/removal`),
    expected: row(401, 404, 200, 403, 403, 404, 404),
  },
  {
    name: 'POST /api/auth/totp/setup',
    call: (c) => c.post('/api/auth/totp/setup'),
    expected: row(401, 200, 200, 200, 200, 200, 200),
  },
  // A malformed code after set-up: refused as invalid input for everyone signed in.
  {
    name: 'POST /api/auth/totp/confirm',
    call: (c) => c.post('/api/auth/totp/confirm', { code: 'abcdef' }),
    expected: row(401, 400, 400, 400, 400, 400, 400),
  },
  {
    name: 'POST /api/auth/login (wrong password)',
    call: (c) =>
      c.post('/api/auth/login', { email: 'member@emberline.test', password: 'not-the-password' }),
    expected: row(401, 401, 401, 401, 401, 401, 401),
  },
  {
    name: 'GET /api/auth/saml/status',
    call: (c) => c.get('/api/auth/saml/status'),
    expected: row(200, 200, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/auth/saml/metadata',
    call: (c) => c.get('/api/auth/saml/metadata'),
    expected: row(200, 200, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/auth/saml/login',
    call: (c) => c.get('/api/auth/saml/login'),
    expected: row(302, 302, 302, 302, 302, 302, 302),
  },
  // No SAMLResponse: a malformed post, refused back to the sign-in page whoever sends it.
  {
    name: 'POST /api/auth/saml/callback',
    call: (c) => c.post('/api/auth/saml/callback', {}),
    expected: row(303, 303, 303, 303, 303, 303, 303),
  },
  {
    name: 'GET /api/admin/users',
    call: (c) => c.get('/api/admin/users'),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'POST /api/admin/users',
    call: (c, x) =>
      c.post('/api/admin/users', {
        email: `new-${x.runTag}@emberline.test`,
        displayName: 'New Person',
        roles: ['board-member'],
      }),
    expected: row(401, 201, 403, 403, 403, 403, 403),
  },
  {
    name: 'PATCH /api/admin/users/:member',
    call: (c, x) => c.patch(`/api/admin/users/${x.memberUserId}`, { displayName: 'Dr Tomas Lind' }),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/admin/boards',
    call: (c) => c.get('/api/admin/boards'),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'POST /api/admin/boards',
    call: (c, x) => c.post('/api/admin/boards', { name: `East Board ${x.runTag}` }),
    expected: row(401, 201, 403, 403, 403, 403, 403),
  },
  {
    name: 'POST /api/admin/boards/:north/members',
    call: (c, x) =>
      c.post(`/api/admin/boards/${x.ids.northBoard}/members`, {
        userId: x.southUserId,
        specialty: 'pathology',
      }),
    expected: row(401, 204, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/admin/role-policies',
    call: (c) => c.get('/api/admin/role-policies'),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'PUT /api/admin/role-policies/:role',
    call: (c) => c.put('/api/admin/role-policies/pathologist', { requiresTotp: false }),
    expected: row(401, 404, 403, 403, 403, 403, 403),
  },
  {
    name: 'PUT /api/admin/role-policies/board-member',
    call: (c) => c.put('/api/admin/role-policies/board-member', { requiresTotp: false }),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/admin/audit',
    call: (c) => c.get('/api/admin/audit'),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/applicator-profiles',
    call: (c) => c.get('/api/applicator-profiles'),
    expected: row(401, 403, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/safety-profiles',
    call: (c) => c.get('/api/safety-profiles'),
    expected: row(401, 403, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/safety-profiles/default',
    call: (c) => c.get('/api/safety-profiles/default'),
    expected: row(401, 403, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/admin/applicator-profiles',
    call: (c) => c.get('/api/admin/applicator-profiles'),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'POST /api/admin/applicator-profiles',
    call: (c, x) =>
      c.post('/api/admin/applicator-profiles', {
        name: `Matrix RFA ${x.runTag}`,
        modality: 'radiofrequency',
        gaugeG: 17,
        workingLengthMm: 150,
        activeLengthMm: 20,
        zoneTable: [{ powerW: 100, timeS: 360, zoneLengthMm: 22, zoneWidthMm: 16, tipOffsetMm: 9 }],
        zoneTableSource: 'institutional',
      }),
    expected: row(401, 201, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/admin/applicator-profiles/:id',
    call: (c, x) => c.get(`/api/admin/applicator-profiles/${x.applicatorProfileId}`),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'PATCH /api/admin/applicator-profiles/:id',
    call: (c, x) =>
      c.patch(`/api/admin/applicator-profiles/${x.applicatorProfileId}`, { gaugeG: 14 }),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/admin/safety-profiles',
    call: (c) => c.get('/api/admin/safety-profiles'),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'POST /api/admin/safety-profiles',
    call: (c, x) => c.post('/api/admin/safety-profiles', safetyBody(`Matrix ${x.runTag}`)),
    expected: row(401, 201, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/admin/safety-profiles/:id',
    call: (c, x) => c.get(`/api/admin/safety-profiles/${x.safetyProfileId}`),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'PATCH /api/admin/safety-profiles/:default',
    call: (c, x) =>
      c.patch(`/api/admin/safety-profiles/${x.safetyProfileId}`, {
        name: `Matrix default ${x.runTag}`,
        isDefault: true,
      }),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'POST /api/cases/:north-ready/plans',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northReady}/plans`, planBody(x.seriesId, x.applicatorProfileId)),
    expected: row(401, 404, 201, 403, 403, 404, 404),
  },
  {
    name: 'POST /api/cases/:south-ready/plans',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.southReady}/plans`, planBody(x.seriesId, x.applicatorProfileId)),
    expected: row(401, 404, 404, 404, 404, 404, 403),
  },
  {
    name: 'GET /api/cases/:north-ready/plans',
    call: (c, x) => c.get(`/api/cases/${x.ids.northReady}/plans`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'GET /api/cases/:north-decided/plans',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDecided}/plans`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    name: 'GET /api/plans/:north-ready-draft',
    call: (c, x) => c.get(`/api/plans/${x.draftPlanId}`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    // The matrix's series has no structures: the presenter is told to import them first.
    name: 'POST /api/plans/:north-ready-draft/assessments',
    call: (c, x) => c.post(`/api/plans/${x.draftPlanId}/assessments`),
    expected: row(401, 404, 409, 403, 403, 404, 404),
  },
  {
    name: 'GET /api/plans/:north-ready-draft/assessments',
    call: (c, x) => c.get(`/api/plans/${x.draftPlanId}/assessments`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'GET /api/assessments/:unknown',
    call: (c) => c.get('/api/assessments/6f1c2a9e-3b7d-4e58-9a61-0c2d4b8e7f13'),
    expected: row(401, 404, 404, 404, 404, 404, 404),
  },
  {
    name: 'PATCH /api/plans/:north-ready-draft',
    call: (c, x) => c.patch(`/api/plans/${x.draftPlanId}`, { name: 'Renamed in the matrix' }),
    expected: row(401, 404, 200, 403, 403, 404, 404),
  },
  {
    name: 'PATCH /api/plans/:north-ready-submitted (not a draft)',
    call: (c, x) => c.patch(`/api/plans/${x.submittedPlanId}`, { name: 'Too late' }),
    expected: row(401, 404, 409, 403, 403, 404, 404),
  },
  {
    name: 'POST /api/plans/:north-ready-submitted/copy',
    call: (c, x) => c.post(`/api/plans/${x.submittedPlanId}/copy`, {}),
    expected: row(401, 404, 201, 403, 403, 404, 404),
  },
  {
    name: 'GET /api/boards/:north/meetings',
    call: (c, x) => c.get(`/api/boards/${x.ids.northBoard}/meetings`),
    expected: row(401, 200, 200, 200, 200, 200, 404),
  },
  {
    name: 'POST /api/boards/:north/meetings',
    call: (c, x) =>
      c.post(`/api/boards/${x.ids.northBoard}/meetings`, {
        startsAt: '2030-01-15T16:00:00+01:00',
        durationMin: 60,
        chairId: x.proceduralistUserId,
      }),
    expected: row(401, 201, 201, 403, 201, 403, 404),
  },
  {
    name: 'GET /api/meetings',
    call: (c) => c.get('/api/meetings'),
    expected: row(401, 200, 200, 200, 200, 200, 200),
  },
  {
    name: 'GET /api/meetings/:north',
    call: (c, x) => c.get(`/api/meetings/${x.meetingId}`),
    expected: row(401, 200, 200, 200, 200, 200, 404),
  },
  {
    name: 'POST /api/meetings/:north/agenda { north-ready }',
    call: (c, x) => c.post(`/api/meetings/${x.meetingId}/agenda`, { caseId: x.ids.northReady }),
    expected: row(401, 404, 201, 403, 403, 403, 404),
  },
  {
    // Only the chair orders; the chair is told the list is not the agenda (400).
    name: 'PUT /api/meetings/:north/agenda/order',
    call: (c, x) =>
      c.put(`/api/meetings/${x.meetingId}/agenda/order`, {
        itemIds: ['0d7d0c1e-2b1a-4c6e-8f0a-5a3c9e1b7d24'],
      }),
    expected: row(401, 404, 403, 403, 400, 403, 404),
  },
  {
    name: 'PUT /api/admin/boards/:north/quorum',
    call: (c, x) =>
      c.put(`/api/admin/boards/${x.ids.northBoard}/quorum`, {
        requiredSpecialties: ['hepatology'],
      }),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'GET /api/agenda-items/:item/tally',
    call: (c, x) => c.get(`/api/agenda-items/${x.agendaItemId}/tally`),
    expected: row(401, 200, 200, 200, 200, 200, 404),
  },
  {
    name: 'POST /api/agenda-items/:item/votes',
    call: (c, x) =>
      c.post(`/api/agenda-items/${x.agendaItemId}/votes`, { option: 'tace', position: 'support' }),
    expected: row(401, 403, 200, 200, 200, 403, 404),
  },
  {
    name: 'GET /api/agenda-items/:item/comments',
    call: (c, x) => c.get(`/api/agenda-items/${x.agendaItemId}/comments`),
    expected: row(401, 200, 200, 200, 200, 200, 404),
  },
  {
    name: 'POST /api/agenda-items/:item/comments',
    call: (c, x) =>
      c.post(`/api/agenda-items/${x.agendaItemId}/comments`, {
        body: 'Segment VIII: the dome is close to the diaphragm.',
        parentId: x.commentId,
      }),
    expected: row(401, 403, 201, 201, 201, 403, 404),
  },
  {
    name: 'PATCH /api/comments/:member-comment',
    call: (c, x) => c.patch(`/api/comments/${x.commentId}`, { isForMinutes: true }),
    expected: row(401, 403, 403, 403, 200, 403, 404),
  },
  {
    // Case-level: as the case is seen (a coordinator once it is decided, an administrator never).
    name: 'GET /api/cases/:agenda-case/comments',
    call: (c, x) => c.get(`/api/cases/${x.agendaCaseId}/comments`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'GET /api/cases/:agenda-case/votes',
    call: (c, x) => c.get(`/api/cases/${x.agendaCaseId}/votes`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'GET /api/cases/:north-decided/votes',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDecided}/votes`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    name: 'GET /api/cases/:agenda-case/annotations',
    call: (c, x) => c.get(`/api/cases/${x.agendaCaseId}/annotations`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'POST /api/cases/:agenda-case/annotations',
    call: (c, x) =>
      c.post(`/api/cases/${x.agendaCaseId}/annotations`, {
        seriesId: x.agendaSeriesId,
        kind: 'point',
        points: [[-42, 10, 5]],
      }),
    expected: row(401, 404, 201, 201, 201, 404, 404),
  },
  {
    // The coordinator sees a decided case but does not annotate (403); for the others it is
    // read-only (409).
    name: 'POST /api/cases/:north-decided/annotations',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northDecided}/annotations`, {
        seriesId: x.decidedSeriesId,
        kind: 'point',
        points: [[-42, 10, 5]],
      }),
    expected: row(401, 404, 409, 409, 409, 403, 404),
  },
  {
    // The author, and the chair of the meeting whose open item holds the case.
    name: 'PATCH /api/annotations/:member-annotation',
    call: (c, x) => c.patch(`/api/annotations/${x.annotationId}`, { points: [[-40, 12, 5]] }),
    expected: row(401, 404, 403, 200, 200, 404, 404),
  },
  {
    // Decided: the author hears 409; the chair has no open item of it, so is not its editor.
    name: 'PATCH /api/annotations/:member-annotation-on-decided',
    call: (c, x) =>
      c.patch(`/api/annotations/${x.decidedAnnotationId}`, { points: [[-40, 12, 5]] }),
    expected: row(401, 404, 403, 409, 403, 403, 404),
  },
  {
    // Key images follow the annotations' rules (key-images/README.md).
    name: 'GET /api/cases/:agenda-case/key-images',
    call: (c, x) => c.get(`/api/cases/${x.agendaCaseId}/key-images`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'GET /api/cases/:north-decided/key-images',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDecided}/key-images`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    name: 'POST /api/cases/:agenda-case/key-images',
    call: (c, x) => keepKeyImage(c, x.agendaCaseId, x.agendaSeriesId),
    expected: row(401, 404, 201, 201, 201, 404, 404),
  },
  {
    // The coordinator sees a decided case but keeps no key image (403); for the others 409.
    name: 'POST /api/cases/:north-decided/key-images',
    call: (c, x) => keepKeyImage(c, x.ids.northDecided, x.decidedSeriesId),
    expected: row(401, 404, 409, 409, 409, 403, 404),
  },
  {
    name: 'GET /api/key-images/:member-key-image/image.png',
    call: (c, x) => c.get(`/api/key-images/${x.keyImageId}/image.png`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    name: 'GET /api/cases/:north-decided/decision',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDecided}/decision`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    // The board summary PDF follows the case file's visibility (summary-pdf/README.md).
    name: 'GET /api/cases/:north-decided/summary.pdf',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDecided}/summary.pdf`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    name: 'GET /api/cases/:agenda-case/summary.pdf',
    call: (c, x) => c.get(`/api/cases/${x.agendaCaseId}/summary.pdf`),
    expected: row(401, 404, 200, 200, 200, 404, 404),
  },
  {
    // No decision yet: 404 for those who see the case; the case itself is out of reach for the rest.
    name: 'GET /api/cases/:agenda-case/decision',
    call: (c, x) => c.get(`/api/cases/${x.agendaCaseId}/decision`),
    expected: row(401, 404, 404, 404, 404, 404, 404),
  },
  {
    name: 'POST /api/cases/:north-decided/decision (decided already)',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northDecided}/decision`, {
        outcome: 'tace',
        rationale: 'Signed twice in the matrix.',
        password: demoPassword,
      }),
    expected: row(401, 404, 403, 403, 409, 403, 404),
  },
  // Logistics (bookings/README.md): coordinators of the board book and confirm; the operator
  // works the checklist and records the treatment; whoever sees the case reads it.
  {
    name: 'GET /api/bookings/queue',
    call: (c) => c.get('/api/bookings/queue'),
    expected: row(401, 403, 403, 403, 403, 200, 403),
  },
  {
    name: 'GET /api/cases/:north-decided/logistics',
    call: (c, x) => c.get(`/api/cases/${x.ids.northDecided}/logistics`),
    expected: row(401, 404, 200, 200, 200, 200, 404),
  },
  {
    name: 'GET /api/admin/checklist-thresholds',
    call: (c) => c.get('/api/admin/checklist-thresholds'),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'PUT /api/admin/checklist-thresholds/inr-max',
    call: (c) =>
      c.put('/api/admin/checklist-thresholds/inr-max', {
        value: 1.8,
        source: 'Matrix: the value confirmed against the local protocol.',
      }),
    expected: row(401, 200, 403, 403, 403, 403, 403),
  },
  {
    name: 'POST /api/cases/:north-decided/booking',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northDecided}/booking`, {
        startsAt: '2030-02-04T08:00:00Z',
        durationMin: 90,
        room: 'Matrix suite',
        operatorId: x.proceduralistUserId,
        anaesthesia: 'sedation',
      }),
    expected: row(401, 404, 403, 403, 403, 201, 404),
  },
  {
    name: 'PUT /api/bookings/:booking/checklist/consent',
    call: (c, x) => c.put(`/api/bookings/${x.bookingId}/checklist/consent`, { isMet: true }),
    expected: row(401, 404, 403, 403, 200, 200, 404),
  },
  {
    // The case has no laboratory panel: the INR item fails and may be overridden.
    name: 'POST /api/bookings/:booking/checklist/inr/override',
    call: (c, x) =>
      c.post(`/api/bookings/${x.bookingId}/checklist/inr/override`, {
        reason: 'Matrix: INR taken on the ward this morning.',
      }),
    expected: row(401, 404, 403, 403, 200, 200, 404),
  },
  {
    // Items still open: the coordinator is told 409.
    name: 'POST /api/bookings/:booking/confirm',
    call: (c, x) => c.post(`/api/bookings/${x.bookingId}/confirm`),
    expected: row(401, 404, 403, 403, 403, 409, 404),
  },
  {
    name: 'PATCH /api/cases/:booked/booking',
    call: (c, x) =>
      c.patch(`/api/cases/${x.bookedCaseId}/booking`, {
        room: 'Matrix suite 2',
        reason: 'Matrix: room swap.',
      }),
    expected: row(401, 404, 403, 403, 403, 200, 404),
  },
  {
    // The operator, but the booking is not confirmed: 409.
    name: 'POST /api/cases/:booked/treatment',
    call: (c, x) =>
      c.post(`/api/cases/${x.bookedCaseId}/treatment`, {
        performedAt: '2026-01-05T10:00:00Z',
        applicatorsUsed: 'Microcatheter',
        complicationGrade: 'none',
      }),
    expected: row(401, 404, 403, 403, 409, 403, 404),
  },
  {
    // Not treated yet: the coordinator is told 409.
    name: 'POST /api/cases/:booked/follow-up',
    call: (c, x) =>
      c.post(`/api/cases/${x.bookedCaseId}/follow-up`, {
        startsAt: '2030-03-04T08:00:00Z',
        durationMin: 30,
        room: 'CT 1',
        modality: 'ct',
      }),
    expected: row(401, 404, 403, 403, 403, 409, 404),
  },
  {
    name: 'DELETE /api/cases/:booked/follow-up (none)',
    call: (c, x) =>
      c.send('delete', `/api/cases/${x.bookedCaseId}/follow-up`, { reason: 'Matrix.' }),
    expected: row(401, 404, 403, 403, 403, 404, 404),
  },
  {
    name: 'DELETE /api/cases/:booked/booking',
    call: (c, x) =>
      c.send('delete', `/api/cases/${x.bookedCaseId}/booking`, { reason: 'Matrix: cancelled.' }),
    expected: row(401, 404, 403, 403, 403, 200, 404),
  },
  {
    name: 'GET /api/meetings/:closed/minutes',
    call: (c, x) => c.get(`/api/meetings/${x.closedMeetingId}/minutes`),
    expected: row(401, 200, 200, 200, 200, 200, 404),
  },
  {
    name: 'POST /api/meetings/:closed/close',
    call: (c, x) => c.post(`/api/meetings/${x.closedMeetingId}/close`),
    expected: row(401, 403, 403, 403, 409, 403, 404),
  },
  {
    name: 'DELETE /api/plans/:north-ready-submitted (not a draft)',
    call: (c, x) => c.delete(`/api/plans/${x.submittedPlanId}`),
    expected: row(401, 404, 409, 403, 403, 404, 404),
  },
  {
    name: 'DELETE /api/plans/:north-ready-draft',
    call: (c, x) => c.delete(`/api/plans/${x.draftPlanId}`),
    expected: row(401, 404, 204, 403, 403, 404, 404),
  },
  {
    name: 'DELETE /api/admin/boards/:north/members/:south',
    call: (c, x) => c.delete(`/api/admin/boards/${x.ids.northBoard}/members/${x.southUserId}`),
    expected: row(401, 204, 403, 403, 403, 403, 403),
  },
  {
    name: 'DELETE /api/cases/:id/lesions/:lesion',
    call: (c, x) => c.delete(`/api/cases/${x.ids.northDraft}/lesions/${x.lesionId}`),
    expected: row(401, 404, 200, 403, 403, 404, 404),
  },
  {
    name: 'DELETE /api/cases/:north-ready (not a draft)',
    call: (c, x) => c.delete(`/api/cases/${x.ids.northReady}`),
    expected: row(401, 404, 409, 403, 403, 404, 404),
  },
  {
    name: 'DELETE /api/series/:decided-series (case decided)',
    call: (c, x) => c.delete(`/api/series/${x.decidedSeriesId}`),
    expected: row(401, 404, 409, 403, 403, 403, 404),
  },
  {
    name: 'DELETE /api/series/:north-ready-removable-series',
    call: (c, x) => c.delete(`/api/series/${x.removableSeriesId}`),
    expected: row(401, 404, 204, 403, 403, 404, 404),
  },
  {
    name: 'DELETE /api/cases/:north-draft',
    call: (c, x) => c.delete(`/api/cases/${x.ids.northDraft}`),
    expected: row(401, 404, 204, 403, 403, 404, 404),
  },
  {
    // The author only.
    name: 'DELETE /api/key-images/:member-key-image',
    call: (c, x) => c.delete(`/api/key-images/${x.keyImageId}`),
    expected: row(401, 404, 403, 204, 403, 404, 404),
  },
  {
    name: 'DELETE /api/annotations/:member-annotation',
    call: (c, x) => c.delete(`/api/annotations/${x.annotationId}`),
    expected: row(401, 404, 403, 204, 204, 404, 404),
  },
  {
    name: 'POST /api/cases/:north-decided/decision/amendments',
    call: (c, x) =>
      c.post(`/api/cases/${x.ids.northDecided}/decision/amendments`, {
        reason: 'Dose of the second session recorded wrongly.',
        text: 'Second session as planned at the first.',
        password: demoPassword,
      }),
    expected: row(401, 404, 403, 403, 201, 403, 404),
  },
  {
    // The chair signs; with quorum the reason is not needed, without it the chair gives it.
    name: 'POST /api/cases/:agenda-case/decision',
    call: (c, x) =>
      c.post(`/api/cases/${x.agendaCaseId}/decision`, {
        outcome: 'tace',
        rationale: 'Signed in the matrix.',
        password: demoPassword,
        quorumOverrideReason: 'The matrix runs without a room.',
      }),
    expected: row(401, 404, 403, 403, 201, 403, 404),
  },
  {
    // Same position again: nothing changes (200), except where the decision closed the item.
    name: 'POST /api/agenda-items/:item/votes (after the decision)',
    call: (c, x) =>
      c.post(`/api/agenda-items/${x.agendaItemId}/votes`, { option: 'tace', position: 'support' }),
    expected: row(401, 403, 200, 200, 409, 403, 404),
  },
  {
    name: 'POST /api/meetings/:north/close',
    call: (c, x) => c.post(`/api/meetings/${x.meetingId}/close`),
    expected: row(401, 403, 403, 403, 200, 403, 404),
  },
  {
    // Only the chair's run closed the meeting; elsewhere it has no minutes yet.
    name: 'GET /api/meetings/:north/minutes',
    call: (c, x) => c.get(`/api/meetings/${x.meetingId}/minutes`),
    expected: row(401, 404, 404, 404, 200, 404, 404),
  },
  {
    name: 'PATCH /api/comments/:member-comment (after the close)',
    call: (c, x) => c.patch(`/api/comments/${x.commentId}`, { isForMinutes: false }),
    expected: row(401, 403, 403, 403, 409, 403, 404),
  },
  {
    name: 'POST /api/auth/logout',
    call: (c) => c.post('/api/auth/logout'),
    expected: row(204, 204, 204, 204, 204, 204, 204),
  },
];

const emails: Record<Exclude<Who, 'anonymous'>, string> = {
  admin: 'admin@emberline.test',
  presenter: 'presenter@emberline.test',
  member: 'member@emberline.test',
  proceduralist: 'proceduralist@emberline.test',
  coordinator: 'coordinator@emberline.test',
  south: 'south@emberline.test',
};

let testApp: TestApp;
let idp: FakeIdp;
let directory: string;
let restoreEnvironment: () => void = () => undefined;
beforeAll(async () => {
  directory = await mkdtemp(join(tmpdir(), 'emberline-matrix-'));
  // Key images are written to the file store: the run's own folder.
  restoreEnvironment = setEnvironment({ FILE_STORE_DIR: join(directory, 'files') });
  const publicUrl = 'http://127.0.0.1:4399';
  idp = await startFakeIdp({
    port: 0,
    spAcsUrl: `${publicUrl}/api/auth/saml/callback`,
    spEntityId: `${publicUrl}/api/auth/saml/metadata`,
    dataDir: join(directory, 'idp'),
  });
  const saml = await samlSettingsFromEnvironment(
    configFromEnvironment({ PORT: '4399' }),
    {
      SAML_ENTRY_POINT: idp.ssoUrl,
      SAML_IDP_ISSUER: idp.entityId,
      SAML_IDP_CERT_FILE: idp.certFile,
    },
    join(directory, 'no-fake-here'),
  );
  testApp = await startTestApp({ saml });
});
afterAll(async () => {
  await testApp.close();
  restoreEnvironment();
  await idp.close();
  await rm(directory, { recursive: true, force: true });
});

describe.each(who)('role × route matrix: %s', (role) => {
  let client: ApiClient;
  let context: Context;

  beforeAll(async () => {
    const ids = await resetToDemo(testApp.orm);
    const em = testApp.orm.em.fork();
    const lesion = await em.findOneOrFail(
      Lesion,
      { clinicalCase: ids.northDraft },
      { orderBy: { segment: 'asc' } },
    );
    const northReady = await em.findOneOrFail(ClinicalCase, ids.northReady);
    const seriesId = await insertSeriesRow(testApp.orm, northReady.id, northReady.presenter.id);
    const removableSeriesId = await insertSeriesRow(
      testApp.orm,
      northReady.id,
      northReady.presenter.id,
    );
    const northDraft = await em.findOneOrFail(ClinicalCase, ids.northDraft);
    const [panelToCorrect, panelToWithdraw] = [1, 2].map(
      (daysAgo) =>
        new LabPanel(
          em.getReference(ClinicalCase, northDraft.id, { wrapped: true }),
          northDraft.presenter,
          { ...labs, takenAt: new Date(Date.now() - daysAgo * 86_400_000) },
        ),
    );
    await em.persist([panelToCorrect, panelToWithdraw]).flush();
    const applicatorProfileId = (
      await em.findOneOrFail(ApplicatorProfile, { name: demoMicrowaveProfileName })
    ).id;
    const plans = (['draft', 'submitted'] as const).map((status) => {
      const plan = new NeedlePlan({
        clinicalCase: em.getReference(ClinicalCase, northReady.id, { wrapped: true }),
        series: em.getReference(ImageSeries, seriesId, { wrapped: true }),
        author: northReady.presenter,
        name: `Matrix ${status} plan`,
        applicators: planBody(seriesId, applicatorProfileId).applicators,
      });
      plan.status = status;
      return plan;
    });
    await em.persist(plans).flush();
    const proceduralistUser = await em.findOneOrFail(User, {
      email: 'proceduralist@emberline.test',
    });
    const meeting = new Meeting({
      board: em.getReference(Board, ids.northBoard, { wrapped: true }),
      startsAt: new Date('2030-01-08T15:00:00Z'),
      durationMin: 90,
      chair: em.getReference(User, proceduralistUser.id, { wrapped: true }),
      scheduledBy: em.getReference(User, proceduralistUser.id, { wrapped: true }),
    });
    await em.persist(meeting).flush();

    // The board's work: a case on that meeting's agenda with a series, the member's comment and
    // annotation on it, a signed decision on the decided case with an annotation made before it,
    // and another meeting closed by its chair.
    const presenterRef = northReady.presenter;
    const memberUser = await em.findOneOrFail(User, { email: 'member@emberline.test' });
    const memberRef = em.getReference(User, memberUser.id, { wrapped: true });
    const agendaCase = new ClinicalCase({
      caseCode: 'NLB-2026-MX1',
      board: em.getReference(Board, ids.northBoard, { wrapped: true }),
      presenter: presenterRef,
      yearOfBirth: 1955,
      sex: 'female',
      primaryDiagnosis: 'hcc',
    });
    agendaCase.status = 'on-agenda';
    const agendaItem = new AgendaItem({
      meeting: em.getReference(Meeting, meeting.id, { wrapped: true }),
      clinicalCase: em.getReference(ClinicalCase, agendaCase.id, { wrapped: true }),
      position: 1,
      addedBy: presenterRef,
    });
    await em.persist([agendaCase, agendaItem]).flush();
    const agendaSeriesId = await insertSeriesRow(testApp.orm, agendaCase.id, presenterRef.id);
    const decidedSeriesId = await insertSeriesRow(testApp.orm, ids.northDecided, presenterRef.id);
    const comment = new ItemComment({
      agendaItem: em.getReference(AgendaItem, agendaItem.id, { wrapped: true }),
      author: memberRef,
      body: 'Is the lesion reachable below the ribs?',
    });
    const annotationOn = (caseId: string, seriesId: string) =>
      new Annotation({
        clinicalCase: em.getReference(ClinicalCase, caseId, { wrapped: true }),
        series: em.getReference(ImageSeries, seriesId, { wrapped: true }),
        author: memberRef,
        kind: 'point',
        points: [[-30, 8, 4]],
      });
    const annotation = annotationOn(agendaCase.id, agendaSeriesId);
    const decidedAnnotation = annotationOn(ids.northDecided, decidedSeriesId);
    const decision = new Decision({
      clinicalCase: em.getReference(ClinicalCase, ids.northDecided, { wrapped: true }),
      outcome: 'tace',
      rationale: 'Matrix fixture.',
      signer: em.getReference(User, proceduralistUser.id, { wrapped: true }),
      signInMethod: 'local',
      quorum: quorumOf([], []),
    });
    const closedMeeting = new Meeting({
      board: em.getReference(Board, ids.northBoard, { wrapped: true }),
      startsAt: new Date('2029-12-18T15:00:00Z'),
      durationMin: 60,
      chair: em.getReference(User, proceduralistUser.id, { wrapped: true }),
      scheduledBy: em.getReference(User, proceduralistUser.id, { wrapped: true }),
    });
    const bookedCase = new ClinicalCase({
      caseCode: 'NLB-2026-MX2',
      board: em.getReference(Board, ids.northBoard, { wrapped: true }),
      presenter: presenterRef,
      yearOfBirth: 1961,
      sex: 'male',
      primaryDiagnosis: 'hcc',
    });
    bookedCase.status = 'booked';
    const bookedDecision = new Decision({
      clinicalCase: em.getReference(ClinicalCase, bookedCase.id, { wrapped: true }),
      outcome: 'tace',
      rationale: 'Matrix fixture.',
      signer: em.getReference(User, proceduralistUser.id, { wrapped: true }),
      signInMethod: 'local',
      quorum: quorumOf([], []),
    });
    const booking = new ProcedureBooking({
      clinicalCase: em.getReference(ClinicalCase, bookedCase.id, { wrapped: true }),
      kind: 'procedure',
      startsAt: new Date('2030-02-05T08:00:00Z'),
      durationMin: 60,
      room: 'Matrix angiography',
      bookedBy: em.getReference(User, proceduralistUser.id, { wrapped: true }),
    });
    booking.operator = em.getReference(User, proceduralistUser.id, { wrapped: true });
    booking.anaesthesia = 'sedation';
    await em
      .persist([comment, annotation, decidedAnnotation, decision, closedMeeting, bookedCase])
      .flush();
    await em.persist([bookedDecision, booking]).flush();
    const chair = new ApiClient(testApp.app);
    expect((await chair.signIn('proceduralist@emberline.test', demoPassword)).status).toBe(200);
    expect((await chair.post(`/api/meetings/${closedMeeting.id}/close`)).status).toBe(200);
    await chair.post('/api/auth/logout');
    const keeper = new ApiClient(testApp.app);
    expect((await keeper.signIn('member@emberline.test', demoPassword)).status).toBe(200);
    const keptImage = await keepKeyImage(keeper, agendaCase.id, agendaSeriesId);
    expect(keptImage.status, JSON.stringify(keptImage.body)).toBe(201);
    await keeper.post('/api/auth/logout');

    context = {
      ids,
      lesionId: lesion.id,
      memberUserId: memberUser.id,
      southUserId: (await em.findOneOrFail(User, { email: 'south@emberline.test' })).id,
      runTag: role.toUpperCase(),
      seriesId,
      removableSeriesId,
      panelToCorrectId: panelToCorrect.id,
      panelToWithdrawId: panelToWithdraw.id,
      draftPlanId: plans[0].id,
      submittedPlanId: plans[1].id,
      applicatorProfileId,
      safetyProfileId: (await em.findOneOrFail(SafetyProfile, { isDefault: true })).id,
      meetingId: meeting.id,
      proceduralistUserId: proceduralistUser.id,
      agendaCaseId: agendaCase.id,
      agendaItemId: agendaItem.id,
      agendaSeriesId,
      commentId: comment.id,
      annotationId: annotation.id,
      decidedSeriesId,
      decidedAnnotationId: decidedAnnotation.id,
      keyImageId: (keptImage.body as { id: string }).id,
      closedMeetingId: closedMeeting.id,
      bookedCaseId: bookedCase.id,
      bookingId: booking.id,
    };
    client = new ApiClient(testApp.app);
    if (role !== 'anonymous')
      expect((await client.signIn(emails[role], demoPassword)).status).toBe(200);
  });

  it.each(routes.map((route) => [route.name, route] as const))('%s', async (_name, route) => {
    const response = await route.call(client, context);
    expect(response.status).toBe(route.expected[role]);
  });
});
