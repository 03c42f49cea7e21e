/**
 * Everyday corrections of a case before its decision: a lesion edited, a lab panel corrected or
 * withdrawn (history kept, the scores following the panel in force), a series removed with what
 * hangs on it, a structure renamed. Scores are checked against the worked examples of the MELD
 * tests (computed from the formulas of Kim WR et al., N Engl J Med 2008;359:1018 and the UNOS/OPTN
 * MELD policy) and the Child–Pugh table (Pugh RN et al., Br J Surg 1973;60:646).
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { randomUUID } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import type {
  AssessmentSnapshot,
  CaseDetail,
  ProblemDetails,
  SeriesRemovalView,
  StructureView,
} from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { Assessment } from '../../server/src/modules/assessments/assessment.entity';
import { Annotation } from '../../server/src/modules/annotations/annotation.entity';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { Lesion } from '../../server/src/modules/cases/lesion.entity';
import { FileStore } from '../../server/src/modules/imaging/file-store';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { KeyImage } from '../../server/src/modules/key-images/key-image.entity';
import { NeedlePlan } from '../../server/src/modules/plans/needle-plan.entity';
import { SafetyProfile } from '../../server/src/modules/plans/safety-profile.entity';
import { LabelMap } from '../../server/src/modules/structures/label-map.entity';
import { Structure } from '../../server/src/modules/structures/structure.entity';
import { User } from '../../server/src/modules/users/user.entity';
import type { SignedInUser } from '../../server/src/common/request-context';
import { loadSummaryContent } from '../../server/src/modules/summary-pdf/summary-content';
import { useImagingTestApp } from './imaging-test-app';
import { plansInStates } from './decision-fixtures';
import { rgbaPng } from './key-image-png';

const context = useImagingTestApp(
  'corrections',
  'corrections-spec-secret-of-32-characters-or-more',
);

/** A panel taken an hour ago: newer than the demo case's own, so it is the one in force. */
const panel = (overrides: Record<string, unknown> = {}) => ({
  takenAt: new Date(Date.now() - 3_600_000).toISOString(),
  bilirubin: { value: 1.5, unit: 'mg/dL' },
  albumin: { value: 3.0, unit: 'g/dL' },
  inr: 1.1,
  creatinine: { value: 2.7, unit: 'mg/dL' },
  sodiumMmolL: 135,
  plateletsE9L: 120,
  ascites: 'mild',
  encephalopathy: 'none',
  dialysisTwiceInPastWeek: false,
  ...overrides,
});

async function userId(email: string): Promise<string> {
  return (await context.app.orm.em.fork().findOneOrFail(User, { email })).id;
}

/** The demo presenter as the server's request context sees them (for the summary's loader). */
async function presenterUser(): Promise<SignedInUser> {
  const user = await context.app.orm.em
    .fork()
    .findOneOrFail(User, { email: 'presenter@emberline.test' });
  return {
    id: user.id,
    email: user.email,
    displayName: user.displayName,
    roles: user.roles,
    memberships: new Map([[context.ids.northBoard, 'interventional-radiology']]),
    boardNames: new Map(),
    signInMethod: 'local',
    hasTotp: false,
    mustEnrolTotp: false,
  };
}

async function auditActions(entityId: string): Promise<string[]> {
  const events = await context.app.orm.em
    .fork()
    .find(AuditEvent, { entityId }, { orderBy: { at: 'asc' } });
  return events.map((event) => event.action);
}

async function decide(caseId: string): Promise<void> {
  await context.app.orm.em.fork().nativeUpdate(ClinicalCase, { id: caseId }, { status: 'decided' });
}

describe('editing a lesion', () => {
  it('corrects segment, diameter and kind, audited, and the case file shows the change', async () => {
    const presenter = await context.signIn();
    const added = (
      await presenter.post(`/api/cases/${context.ids.northDraft}/lesions`, {
        segment: 'VII',
        diameterMm: 24,
        kind: 'hcc',
      })
    ).body as CaseDetail;
    const lesion = added.lesions.at(-1);
    if (!lesion) throw new Error('no lesion added');
    const response = await presenter.patch(
      `/api/cases/${context.ids.northDraft}/lesions/${lesion.id}`,
      { segment: 8, diameterMm: 31.5, kind: 'indeterminate' },
    );
    expect(response.status).toBe(200);
    const edited = (response.body as CaseDetail).lesions.find((found) => found.id === lesion.id);
    expect(edited).toEqual({
      id: lesion.id,
      segment: 'VIII',
      diameterMm: 31.5,
      kind: 'indeterminate',
      linkedStructures: [],
    });
    expect(await auditActions(context.ids.northDraft)).toContain('lesion.update');
  });

  it('refuses bad values with 400 naming the field, and an empty body', async () => {
    const presenter = await context.signIn();
    const [lesion] = await context.app.orm.em
      .fork()
      .find(Lesion, { clinicalCase: context.ids.northDraft });
    if (!lesion) throw new Error('the demo draft has no lesion');
    const path = `/api/cases/${context.ids.northDraft}/lesions/${lesion.id}`;
    const tooBig = await presenter.patch(path, { diameterMm: 400 });
    expect(tooBig.status).toBe(400);
    expect((tooBig.body as ProblemDetails).detail).toMatch(/diameterMm/);
    const segment = await presenter.patch(path, { segment: 'IX' });
    expect(segment.status).toBe(400);
    expect((segment.body as ProblemDetails).detail).toMatch(/segment/);
    expect((await presenter.patch(path, {})).status).toBe(400);
    expect((await presenter.patch(path, { colour: 'red' })).status).toBe(400);
    // Nothing changed.
    const stored = await context.app.orm.em.fork().findOneOrFail(Lesion, { id: lesion.id });
    expect(stored.diameterMm).toBe(lesion.diameterMm);
  });

  it('answers 404 for a lesion of another case, another board, 403 for a non-presenter and 409 once decided', async () => {
    const presenter = await context.signIn();
    const em = context.app.orm.em.fork();
    const [lesion] = await em.find(Lesion, { clinicalCase: context.ids.northDraft });
    if (!lesion) throw new Error('the demo draft has no lesion');
    const body = { diameterMm: 20 };
    expect(
      (await presenter.patch(`/api/cases/${context.ids.northReady}/lesions/${lesion.id}`, body))
        .status,
    ).toBe(404);
    const south = await context.signIn('south.presenter@emberline.test');
    expect(
      (await south.patch(`/api/cases/${context.ids.northDraft}/lesions/${lesion.id}`, body)).status,
    ).toBe(404);
    const member = await context.signIn('member@emberline.test');
    expect(
      (await member.patch(`/api/cases/${context.ids.northDraft}/lesions/${lesion.id}`, body))
        .status,
    ).toBe(403);
    await decide(context.ids.northDraft);
    const decided = await presenter.patch(
      `/api/cases/${context.ids.northDraft}/lesions/${lesion.id}`,
      body,
    );
    expect(decided.status).toBe(409);
  });
});

describe('correcting and withdrawing a lab panel', () => {
  it('supersedes the panel with the correction, keeps both, and the scores follow the correction', async () => {
    const presenter = await context.signIn();
    const caseId = context.ids.northDraft;
    // Kim 2008 / UNOS worked example: Cr 2.7, bili 1.5, INR 1.1, Na 135 → MELD 19, MELD-Na 20.
    const first = (await presenter.post(`/api/cases/${caseId}/lab-panels`, panel()))
      .body as CaseDetail;
    expect(first.scores.meld).toBe(19);
    expect(first.scores.meldNa).toBe(20);
    const wrong = first.labPanels[0];
    if (!wrong) throw new Error('no panel');
    expect(first.labPanelInForceId).toBe(wrong.id);

    // The creatinine was mistyped: 1.4, bilirubin 3.2, INR 1.8, Na 134 → MELD 21, MELD-Na 23
    // (the same worked examples, computed from the formulas).
    const corrected = panel({
      takenAt: wrong.takenAt,
      creatinine: { value: 1.4, unit: 'mg/dL' },
      bilirubin: { value: 3.2, unit: 'mg/dL' },
      inr: 1.8,
      sodiumMmolL: 134,
    });
    const response = await presenter.post(
      `/api/cases/${caseId}/lab-panels/${wrong.id}/correction`,
      { ...corrected, reason: 'Creatinine and bilirubin typed from the wrong report' },
    );
    expect(response.status).toBe(201);
    const detail = response.body as CaseDetail;
    expect(detail.scores.meld).toBe(21);
    expect(detail.scores.meldNa).toBe(23);
    // Child–Pugh table (Pugh 1973; INR bands common practice): bilirubin 3.2 > 3 mg/dL → 3,
    // albumin 2.8–3.5 g/dL → 2, INR 1.7–2.3 → 2, mild ascites → 2, no encephalopathy → 1:
    // 10 points, class C.
    expect(detail.scores.childPugh).toEqual({ points: 10, class: 'C' });
    const old = detail.labPanels.find((found) => found.id === wrong.id);
    const correction = detail.labPanels.find((found) => found.correctsPanelId === wrong.id);
    expect(correction?.creatinine).toEqual({ value: 1.4, unit: 'mg/dL' });
    expect(detail.labPanelInForceId).toBe(correction?.id);
    expect(old?.superseded).toMatchObject({
      reason: 'Creatinine and bilirubin typed from the wrong report',
      byPanelId: correction?.id,
    });
    expect(old?.superseded?.by).not.toBe('');
    expect(old?.creatinine).toEqual({ value: 2.7, unit: 'mg/dL' }); // history kept
    expect(detail.labPanels).toHaveLength(first.labPanels.length + 1);
    expect(await auditActions(caseId)).toContain('lab-panel.correct');

    // The board summary PDF prints the scores and date of the same panel.
    const summary = await loadSummaryContent(
      context.app.orm.em.fork(),
      await presenterUser(),
      caseId,
    );
    expect(summary.scores).toEqual(detail.scores);
    expect(summary.panelTakenAt?.toISOString()).toBe(correction?.takenAt);

    // A superseded panel is not corrected twice.
    const again = await presenter.post(`/api/cases/${caseId}/lab-panels/${wrong.id}/correction`, {
      ...corrected,
      reason: 'again',
    });
    expect(again.status).toBe(409);
  });

  it('withdraws a panel: kept, marked, and the scores fall back to the panel before it', async () => {
    const presenter = await context.signIn();
    const caseId = context.ids.northDraft;
    const before = (await presenter.get(`/api/cases/${caseId}`)).body as CaseDetail;
    const added = (await presenter.post(`/api/cases/${caseId}/lab-panels`, panel()))
      .body as CaseDetail;
    const newest = added.labPanels[0];
    if (!newest) throw new Error('no panel');
    expect(added.scores.meld).toBe(19);

    const missingReason = await presenter.post(
      `/api/cases/${caseId}/lab-panels/${newest.id}/withdrawal`,
      { reason: '   ' },
    );
    expect(missingReason.status).toBe(400);
    expect((missingReason.body as ProblemDetails).detail).toMatch(/reason/);

    const response = await presenter.post(
      `/api/cases/${caseId}/lab-panels/${newest.id}/withdrawal`,
      { reason: 'Sample of another patient' },
    );
    expect(response.status).toBe(200);
    const detail = response.body as CaseDetail;
    expect(detail.labPanels.find((found) => found.id === newest.id)?.withdrawn?.reason).toBe(
      'Sample of another patient',
    );
    // Back to what the case showed before the panel was added.
    expect(detail.labPanelInForceId).toBe(before.labPanelInForceId);
    expect(detail.scores.meld).toBe(before.scores.meld);
    expect(detail.scores.childPugh).toEqual(before.scores.childPugh);

    // With every panel withdrawn, no lab-based score is given.
    for (const remaining of detail.labPanels.filter((found) => !found.withdrawn)) {
      await presenter.post(`/api/cases/${caseId}/lab-panels/${remaining.id}/withdrawal`, {
        reason: 'test',
      });
    }
    const none = (await presenter.get(`/api/cases/${caseId}`)).body as CaseDetail;
    expect(none.labPanelInForceId).toBeNull();
    expect(none.scores.meld).toBeNull();
    expect(none.labPanels.length).toBe(detail.labPanels.length);
  });

  it('requires the reason for a correction and refuses bad values with 400 naming the field', async () => {
    const presenter = await context.signIn();
    const caseId = context.ids.northDraft;
    const [shown] = ((await presenter.get(`/api/cases/${caseId}`)).body as CaseDetail).labPanels;
    if (!shown) throw new Error('the demo draft has no panel');
    const noReason = await presenter.post(
      `/api/cases/${caseId}/lab-panels/${shown.id}/correction`,
      panel(),
    );
    expect(noReason.status).toBe(400);
    expect((noReason.body as ProblemDetails).detail).toMatch(/reason/);
    const badInr = await presenter.post(`/api/cases/${caseId}/lab-panels/${shown.id}/correction`, {
      ...panel({ inr: 40 }),
      reason: 'typo',
    });
    expect(badInr.status).toBe(400);
    expect((badInr.body as ProblemDetails).detail).toMatch(/inr/);
    const after = (await presenter.get(`/api/cases/${caseId}`)).body as CaseDetail;
    expect(after.labPanels.every((found) => !found.superseded)).toBe(true);
  });

  it('answers 404 to another board, 403 to a non-presenter and 409 once decided', async () => {
    const presenter = await context.signIn();
    const caseId = context.ids.northDraft;
    const [shown] = ((await presenter.get(`/api/cases/${caseId}`)).body as CaseDetail).labPanels;
    if (!shown) throw new Error('the demo draft has no panel');
    const withdrawal = `/api/cases/${caseId}/lab-panels/${shown.id}/withdrawal`;
    const south = await context.signIn('south.presenter@emberline.test');
    expect((await south.post(withdrawal, { reason: 'x' })).status).toBe(404);
    const member = await context.signIn('member@emberline.test');
    expect((await member.post(withdrawal, { reason: 'x' })).status).toBe(403);
    expect(
      (
        await presenter.post(`/api/cases/${caseId}/lab-panels/${randomUUID()}/withdrawal`, {
          reason: 'x',
        })
      ).status,
    ).toBe(404);
    await decide(caseId);
    expect((await presenter.post(withdrawal, { reason: 'x' })).status).toBe(409);
  });
});

/** A series row with its volume file, a label map file and row, and two structures. */
/** A key image row and its stored picture, as the key-images routes keep them. */
async function keepKeyImage(seriesId: string, caseId: string): Promise<string> {
  const em = context.app.orm.em.fork();
  const storageKey = `key-images/${randomUUID()}.png`;
  const bytes = await new FileStore(context.fileStoreDir).writeAtomically(storageKey, [
    rgbaPng(4, 4, () => [200, 10, 10, 255]),
  ]);
  em.persist(
    new KeyImage({
      clinicalCase: em.getReference(ClinicalCase, caseId, { wrapped: true }),
      series: em.getReference(ImageSeries, seriesId, { wrapped: true }),
      author: em.getReference(User, await userId('presenter@emberline.test'), { wrapped: true }),
      pane: 'axial',
      viewState: {
        cursorLps: [0, 0, 0],
        sliceIndex: 1,
        window: { width: 400, level: 40 },
        camera: null,
        hiddenLabels: [],
        labelOpacity: 0.5,
        planId: null,
        zones: [],
      },
      storageKey,
      widthPx: 4,
      heightPx: 4,
      bytes,
    }),
  );
  await em.flush();
  const path = join(context.fileStoreDir, ...storageKey.split('/'));
  expect(existsSync(path)).toBe(true);
  return path;
}

async function seriesWithStructures(caseId: string) {
  const presenterId = await userId('presenter@emberline.test');
  const presenter = await context.signIn();
  const { seriesId, plans } = await plansInStates(context.app.orm, presenter, presenterId, caseId, [
    { name: 'Lateral approach', status: 'draft' },
  ]);
  const em = context.app.orm.em.fork();
  const series = await em.findOneOrFail(ImageSeries, { id: seriesId });
  const volumes = new FileStore(context.fileStoreDir);
  const labelMaps = new FileStore(join(context.fileStoreDir, 'label-maps'));
  await volumes.writeAtomically(series.storageKey, [new Uint8Array([1, 2, 3])]);
  const labelMapKey = labelMaps.newVolumeKey();
  await labelMaps.writeAtomically(labelMapKey, [new Uint8Array([0, 1, 2])]);
  const seriesRef = em.getReference(ImageSeries, seriesId, { wrapped: true });
  em.persist(
    new LabelMap({
      series: seriesRef,
      source: 'nifti',
      dataType: 'uint8',
      storageKey: labelMapKey,
      byteLength: 3,
      importedBy: em.getReference(User, presenterId, { wrapped: true }),
    }),
  );
  const [lesion] = await em.find(Lesion, { clinicalCase: caseId });
  const tumour = new Structure({
    series: seriesRef,
    labelValue: 1,
    kind: 'tumour',
    name: 'Tumour A',
    voxelCount: 10,
    volumeMl: 0.01,
    source: 'nifti',
  });
  if (lesion) tumour.lesion = em.getReference(Lesion, lesion.id, { wrapped: true });
  const liver = new Structure({
    series: seriesRef,
    labelValue: 2,
    kind: 'liver',
    name: 'Liver',
    voxelCount: 100,
    volumeMl: 0.1,
    source: 'nifti',
  });
  em.persist([tumour, liver]);
  em.persist(
    new Annotation({
      clinicalCase: em.getReference(ClinicalCase, caseId, { wrapped: true }),
      series: seriesRef,
      author: em.getReference(User, presenterId, { wrapped: true }),
      kind: 'point',
      points: [[0, 0, 0]],
    }),
  );
  await em.flush();
  return {
    seriesId,
    planId: plans[0]?.id ?? '',
    tumourId: tumour.id,
    volumePath: join(context.fileStoreDir, ...series.storageKey.split('/')),
    labelMapPath: join(context.fileStoreDir, 'label-maps', ...labelMapKey.split('/')),
  };
}

describe('removing a series', () => {
  it('previews what goes, then removes the series, its structures, plans, annotations and files', async () => {
    const presenter = await context.signIn();
    const fixture = await seriesWithStructures(context.ids.northDraft);
    expect(existsSync(fixture.volumePath)).toBe(true);
    expect(existsSync(fixture.labelMapPath)).toBe(true);

    // The case file names the structure linked to the lesion (for the lesion's removal).
    const before = (await presenter.get(`/api/cases/${context.ids.northDraft}`)).body as CaseDetail;
    expect(before.lesions.flatMap((lesion) => lesion.linkedStructures ?? [])).toEqual([
      { name: 'Tumour A', seriesLabel: 'CT, 10 slices', isConfirmed: false },
    ]);

    // A key image kept from the series: its row and its picture in the file store.
    const keyImagePath = await keepKeyImage(fixture.seriesId, context.ids.northDraft);

    const preview = await presenter.get(`/api/series/${fixture.seriesId}/removal`);
    expect(preview.status).toBe(200);
    const view = preview.body as SeriesRemovalView;
    expect(view.keyImageCount).toBe(1);
    expect(view.structures.map((structure) => structure.name)).toEqual(['Tumour A', 'Liver']);
    expect(view.structures[0]?.lesionLabel).toMatch(/^segment /);
    expect(view.plans.map((plan) => plan.name)).toEqual(['Lateral approach']);
    expect(view.annotationCount).toBe(1);
    expect(view.hasLabelMap).toBe(true);
    expect(view.blockedBy).toEqual([]);

    expect((await presenter.delete(`/api/series/${fixture.seriesId}`)).status).toBe(204);
    const em = context.app.orm.em.fork();
    expect(await em.count(ImageSeries, { id: fixture.seriesId })).toBe(0);
    expect(await em.count(Structure, { series: fixture.seriesId })).toBe(0);
    expect(await em.count(LabelMap, { series: fixture.seriesId })).toBe(0);
    expect(await em.count(NeedlePlan, { id: fixture.planId })).toBe(0);
    expect(await em.count(Annotation, { series: fixture.seriesId })).toBe(0);
    // The lesion stays: only its link went with the structure.
    expect(await em.count(Lesion, { clinicalCase: context.ids.northDraft })).toBeGreaterThan(0);
    expect(existsSync(fixture.volumePath)).toBe(false);
    expect(existsSync(fixture.labelMapPath)).toBe(false);
    expect(await em.count(KeyImage, { series: fixture.seriesId })).toBe(0);
    expect(existsSync(keyImagePath)).toBe(false);
    expect(await auditActions(fixture.seriesId)).toEqual(['series.removal-read', 'series.delete']);
    expect((await presenter.get(`/api/series/${fixture.seriesId}`)).status).toBe(404);
  });

  it('refuses with 409 naming the plan while an assessment ran on the series, and keeps everything', async () => {
    const presenter = await context.signIn();
    const fixture = await seriesWithStructures(context.ids.northDraft);
    const em = context.app.orm.em.fork();
    const safetyProfile = await em.findOneOrFail(SafetyProfile, { isDefault: true });
    const assessment = new Assessment({
      plan: em.getReference(NeedlePlan, fixture.planId, { wrapped: true }),
      inputsHash: `fixture-${fixture.planId}`,
      engineVersion: 'fixture',
      requestedBy: em.getReference(User, await userId('presenter@emberline.test'), {
        wrapped: true,
      }),
      safetyProfile: em.getReference(SafetyProfile, safetyProfile.id, { wrapped: true }),
      snapshot: null as unknown as AssessmentSnapshot,
    });
    assessment.status = 'failed';
    em.persist(assessment);
    await em.flush();

    const view = (await presenter.get(`/api/series/${fixture.seriesId}/removal`))
      .body as SeriesRemovalView;
    expect(view.blockedBy).toEqual([
      { planId: fixture.planId, planName: 'Lateral approach', assessmentCount: 1 },
    ]);
    const refused = await presenter.delete(`/api/series/${fixture.seriesId}`);
    expect(refused.status).toBe(409);
    expect((refused.body as ProblemDetails).detail).toMatch(/Lateral approach/);
    const after = context.app.orm.em.fork();
    expect(await after.count(Structure, { series: fixture.seriesId })).toBe(2);
    expect(existsSync(fixture.volumePath)).toBe(true);
    expect(existsSync(fixture.labelMapPath)).toBe(true);
  });

  it('answers 404 to another board, 403 to a non-presenter and 409 once decided', async () => {
    const fixture = await seriesWithStructures(context.ids.northDraft);
    const south = await context.signIn('south.presenter@emberline.test');
    expect((await south.get(`/api/series/${fixture.seriesId}/removal`)).status).toBe(404);
    expect((await south.delete(`/api/series/${fixture.seriesId}`)).status).toBe(404);
    const member = await context.signIn('member@emberline.test');
    expect((await member.get(`/api/series/${fixture.seriesId}/removal`)).status).toBe(403);
    expect((await member.delete(`/api/series/${fixture.seriesId}`)).status).toBe(403);
    await decide(context.ids.northDraft);
    const presenter = await context.signIn();
    expect((await presenter.delete(`/api/series/${fixture.seriesId}`)).status).toBe(409);
    expect(existsSync(fixture.volumePath)).toBe(true);
  });
});

describe('renaming a structure', () => {
  it('renames (trimmed), refuses an empty or taken name, and answers 409 once decided', async () => {
    const presenter = await context.signIn();
    const fixture = await seriesWithStructures(context.ids.northDraft);
    const path = `/api/structures/${fixture.tumourId}`;
    const renamed = await presenter.patch(path, { name: '  Tumour of segment VII  ' });
    expect(renamed.status).toBe(200);
    expect((renamed.body as StructureView).name).toBe('Tumour of segment VII');
    const empty = await presenter.patch(path, { name: '   ' });
    expect(empty.status).toBe(400);
    expect((empty.body as ProblemDetails).detail).toMatch(/name/);
    const taken = await presenter.patch(path, { name: 'liver' });
    expect(taken.status).toBe(409);
    expect((taken.body as ProblemDetails).detail).toMatch(/liver/);
    const member = await context.signIn('member@emberline.test');
    expect((await member.patch(path, { name: 'Other' })).status).toBe(403);
    await decide(context.ids.northDraft);
    expect((await presenter.patch(path, { name: 'Other' })).status).toBe(409);
  });
});
