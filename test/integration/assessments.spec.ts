/**
 * Plan assessment through the API on the invented sample case: the demo plans queued, worked by
 * the in-process pool, and their figures checked against the anatomy of sample-data/abdomen
 * computed here, independently of the engine — the analytic shapes of the manifest, the zone
 * table rows of the demo profiles, and textbook geometry (segment–segment distance, Ericson,
 * Real-Time Collision Detection §5.1.9; ellipsoid membership; margins of a concentric sphere in
 * a spheroid, elementary geometry).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  CALIBRATION_MODEL_VERSION,
  decodeAssessmentDisplay,
  type ApplicatorProfileView,
  type AssessmentView,
  type RehearsalReplayView,
  type PlanView,
  type StructureView,
  type Vec3,
  type ZoneTableRow,
} from '@emberline/shared';
import { generateAbdomenCt } from '../../sample-data/generate-abdomen-ct';
import { seedDemoImaging } from '../../server/seeders/demo-imaging';
import { seedDemoPlans } from '../../server/seeders/demo-plans';
import { type AssessmentRuntime } from '../../server/src/modules/assessments/assessment-runtime';
import { ApplicatorProfileVersion } from '../../server/src/modules/plans/applicator-profile-version.entity';
import { ApiClient, startTestAppWithAssessments, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo, type DemoIds } from '../support/demo';
import { setEnvironment } from './imaging-fixtures';
import { closestDistanceBetweenSegments, voxelCentresInSphere } from './assessment-geometry';

const fileStoreDir = mkdtempSync(join(tmpdir(), 'emberline-assessments-test-'));
const testEnvironment: Record<string, string> = {
  FILE_STORE_DIR: fileStoreDir,
  DEIDENTIFICATION_SECRET: 'assessments-test-secret-5b0e2f7c91d84a33b6',
  IMAGING_READ_TIMEOUT_MS: '20000',
};

const { manifest } = generateAbdomenCt();
/** Half the diagonal of a sample voxel (0.8 × 0.8 × 2.5 mm): how far a voxelised surface may lie from the analytic one. */
const halfVoxelDiagonalMm = 0.5 * Math.hypot(...manifest.grid.spacingMm);

let restoreEnvironment: () => void = () => undefined;
let testApp: TestApp;
let runtime: AssessmentRuntime;
let ids: DemoIds;
let presenter: ApiClient;
let admin: ApiClient;
let plans: PlanView[];
let profiles: ApplicatorProfileView[];
let structures: StructureView[];

async function signedIn(email: string): Promise<ApiClient> {
  const client = new ApiClient(testApp.app);
  expect((await client.signIn(email, demoPassword)).status).toBe(200);
  return client;
}

/** Polls GET /api/assessments/:id until it is done or failed. */
async function settled(id: string, timeoutMs = 240_000): Promise<AssessmentView> {
  const startedAt = Date.now();
  for (;;) {
    const response = await presenter.get(`/api/assessments/${id}`);
    expect(response.status).toBe(200);
    const view = response.body as AssessmentView;
    if (view.status === 'done' || view.status === 'failed') return view;
    if (Date.now() - startedAt > timeoutMs)
      throw new Error(`assessment ${id} still ${view.status}`);
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
}

const subtract = (a: Readonly<Vec3>, b: Readonly<Vec3>): Vec3 => [
  a[0] - b[0],
  a[1] - b[1],
  a[2] - b[2],
];
const norm = (a: Readonly<Vec3>) => Math.hypot(a[0], a[1], a[2]);

/** The table row the plan names exactly (the demo plans use table rows, not interpolations). */
function rowOf(plan: PlanView): { row: ZoneTableRow; profile: ApplicatorProfileView } {
  const applicator = plan.applicators[0];
  const profile = profiles.find((entry) => entry.id === applicator.profileId);
  if (!profile) throw new Error('profile missing');
  const row = profile.zoneTable.find(
    (entry) => entry.powerW === applicator.powerW && entry.timeS === applicator.timeS,
  );
  if (!row) throw new Error('the demo plan is not on a table row');
  return { row, profile };
}

/** The table zone as the issue defines it: centre `tipOffsetMm` behind the tip, towards the entry. */
function tableZone(plan: PlanView) {
  const { row } = rowOf(plan);
  const { entry, target } = plan.applicators[0];
  const shaft = subtract(target, entry);
  const axis = shaft.map((value) => value / norm(shaft)) as Vec3;
  const centre = target.map((value, index) => value - row.tipOffsetMm * axis[index]) as Vec3;
  return { centre, axis, along: row.zoneLengthMm / 2, across: row.zoneWidthMm / 2 };
}

function isInsideZone(zone: ReturnType<typeof tableZone>, point: Readonly<Vec3>): boolean {
  const offset = subtract(point, zone.centre);
  const alongMm = offset[0] * zone.axis[0] + offset[1] * zone.axis[1] + offset[2] * zone.axis[2];
  const acrossSquared = offset[0] ** 2 + offset[1] ** 2 + offset[2] ** 2 - alongMm ** 2;
  return (alongMm / zone.along) ** 2 + acrossSquared / zone.across ** 2 <= 1;
}

/** The manifest tumour whose centre lies nearest the zone centre: the one the plan treats. */
function treatedTumour(plan: PlanView) {
  const zone = tableZone(plan);
  return [...manifest.tumours].sort(
    (a, b) => norm(subtract(a.centreLps, zone.centre)) - norm(subtract(b.centreLps, zone.centre)),
  )[0];
}

beforeAll(async () => {
  restoreEnvironment = setEnvironment(testEnvironment);
  ({ testApp, runtime } = await startTestAppWithAssessments({
    isWorking: true,
    fileStoreDir,
    pool: { threads: 1 },
  }));
  ids = await resetToDemo(testApp.orm);
  expect(await seedDemoImaging(testApp.orm.em.fork())).toBe(true);
  expect(await seedDemoPlans(testApp.orm.em.fork())).toBe(true);
  presenter = await signedIn('presenter@emberline.test');
  admin = await signedIn('admin@emberline.test');
  plans = (await presenter.get(`/api/cases/${ids.northReady}/plans`)).body as PlanView[];
  profiles = (await presenter.get('/api/applicator-profiles')).body as ApplicatorProfileView[];
  structures = (await presenter.get(`/api/series/${plans[0].seriesId}/structures`))
    .body as StructureView[];
}, 120_000);

afterAll(async () => {
  await runtime?.close();
  await testApp?.close();
  restoreEnvironment();
  rmSync(fileStoreDir, { recursive: true, force: true });
});

describe('assessing the demo plans of the sample case', () => {
  const assessed = new Map<string, AssessmentView>();

  beforeAll(async () => {
    expect(plans.length).toBe(3);
    for (const plan of plans) {
      const response = await presenter.post(`/api/plans/${plan.id}/assessments`);
      expect(response.status).toBe(202);
      expect(['queued', 'running', 'done']).toContain((response.body as AssessmentView).status);
      assessed.set(plan.id, await settled((response.body as AssessmentView).id));
    }
  }, 600_000);

  it('finishes every plan with a result of the documented shape', () => {
    for (const view of assessed.values()) {
      expect(view.status, view.error).toBe('done');
      expect(view.progress).toBe(1);
      expect(view.result?.engineVersion).toMatch(/^\d+\.\d+\.\d+$/);
      expect(view.result?.zones.map((zone) => zone.model).sort()).toEqual(['bioheat', 'table']);
      // The invented demo tables need implausibly little power in the heating model: the table
      // zone decides and the physics zone is shown for information, with the reason.
      expect(view.result?.primaryZoneModel).toBe('table');
      const physics = view.result?.zones.find((zone) => zone.model === 'bioheat');
      expect(physics?.isAdvisory).toBe(true);
      expect(physics?.advisoryReason).toMatch(/implausible settings.*shown for information only/);
      expect(physics?.boundaryErrorMm).toBeGreaterThan(0);
      expect(['acceptable', 'acceptable-with-cautions', 'not-acceptable']).toContain(
        view.result?.verdict.level,
      );
    }
  });

  it('reports the heating model calibration of each profile, a residual per zone table row', () => {
    for (const plan of plans) {
      const { profile } = rowOf(plan);
      const calibration = assessed
        .get(plan.id)
        ?.result?.calibrations?.find((entry) => entry.profileId === profile.id);
      expect(calibration?.parameter).toBeGreaterThan(0);
      expect(calibration?.rows.map((row) => `${row.powerW}/${row.timeS}`).sort()).toEqual(
        profile.zoneTable.map((row) => `${row.powerW}/${row.timeS}`).sort(),
      );
      // The model cannot fit every row; the rms is the mean of the squared row residuals
      // (length, width, centre), recomputed here from the rows.
      const squares = (calibration?.rows ?? []).flatMap((row) => [
        row.residualLengthMm ** 2,
        row.residualWidthMm ** 2,
        (row.residualTipOffsetMm ?? NaN) ** 2,
      ]);
      const rms = Math.sqrt(squares.reduce((sum, value) => sum + value, 0) / squares.length);
      expect(calibration?.rmsResidualMm).toBeCloseTo(rms, 6);
      expect(calibration?.maxResidualMm).toBeCloseTo(Math.sqrt(Math.max(...squares)), 6);
      // Predicting rows left out of the fit is judged against the safety profile's tolerance.
      expect(calibration?.leaveOneOutMaxMm).toBeGreaterThan(0);
      expect(calibration?.toleranceMm).toBe(2);
      expect(calibration?.isWithinTolerance).toBe(false);
      expect(calibration?.isImplausible).toBe(true);
      expect(calibration?.profileVersion).toBe(profile.version);
      expect(calibration?.profileName).toBe(profile.name);
    }
  });

  it('stores each profile version’s calibration once, for every later run to reuse', async () => {
    for (const plan of plans) {
      const { profile } = rowOf(plan);
      const version = await testApp.orm.em
        .fork()
        .findOneOrFail(ApplicatorProfileVersion, { profile: profile.id, version: profile.version });
      const reported = assessed
        .get(plan.id)
        ?.result?.calibrations?.find((entry) => entry.profileId === profile.id);
      expect(version.calibration?.modelVersion).toBe(CALIBRATION_MODEL_VERSION);
      expect(version.calibration?.rmsResidualMm).toBeCloseTo(reported?.rmsResidualMm ?? NaN, 9);
    }
  });

  it('measures path length and angulation as the plan geometry gives them', () => {
    // Path length |target − entry|; angulation asin(|Δz| / length) from the axial plane (LPS z
    // is the body axis, DICOM PS3.3 C.7.6.2.1.1).
    for (const plan of plans) {
      const figures = assessed.get(plan.id)?.result?.applicators[0];
      const { entry, target } = plan.applicators[0];
      const lengthMm = norm(subtract(target, entry));
      expect(figures?.pathLengthMm).toBeCloseTo(lengthMm, 6);
      expect(figures?.workingLengthMm).toBe(rowOf(plan).profile.workingLengthMm);
      const angulationDeg = (Math.asin(Math.abs(target[2] - entry[2]) / lengthMm) * 180) / Math.PI;
      expect(figures?.angulationDeg).toBeCloseTo(angulationDeg, 6);
    }
  });

  it('gives each tumour the volume of its painted voxels', () => {
    for (const view of assessed.values()) {
      for (const zone of view.result?.zones ?? []) {
        for (const tumour of zone.tumours) {
          const structure = structures.find((entry) => entry.id === tumour.structureId);
          const truth = manifest.tumours.find(
            (entry) => entry.labelValue === structure?.labelValue,
          );
          expect(truth, 'a tumour of the manifest').toBeDefined();
          expect(tumour.volumeMl).toBeCloseTo(truth?.voxelVolumeMl ?? Number.NaN, 6);
        }
      }
    }
  });

  it('covers the treated tumour with the table zone as the ellipsoid computed here does', () => {
    for (const plan of plans) {
      const zone = tableZone(plan);
      const tumour = treatedTumour(plan);
      const centres = voxelCentresInSphere(manifest.grid, tumour.centreLps, tumour.radiusMm);
      // The oracle paints the sphere as the generator did: the same voxels.
      expect(centres.length).toBe(tumour.voxelCount);
      const covered = centres.filter((centre) => isInsideZone(zone, centre)).length;
      const expectedPercent = (100 * covered) / centres.length;
      const structure = structures.find((entry) => entry.labelValue === tumour.labelValue);
      const figures = assessed
        .get(plan.id)
        ?.result?.zones.find((entry) => entry.model === 'table')
        ?.tumours.find((entry) => entry.structureId === structure?.id);
      // Both count voxel centres of the same grid; a centre lying on the zone surface may fall
      // either way, so allow one percentage point.
      expect(figures?.coveredPercent).toBeGreaterThanOrEqual(expectedPercent - 1);
      expect(figures?.coveredPercent).toBeLessThanOrEqual(expectedPercent + 1);
    }
  });

  it('gives the minimal margin of a concentric sphere in a spheroid: min(a, b) − r', () => {
    // The demo tips are placed so that each table zone is centred on its tumour (sample-data
    // and server/seeders/demo-plans.ts); concentric sphere r in an ellipsoid with semi-axes
    // a, b, b: margin = min(a, b) − r (elementary geometry [C]: r = 10 in R = 15 → 5 mm).
    for (const plan of plans) {
      const zone = tableZone(plan);
      const tumour = treatedTumour(plan);
      expect(norm(subtract(zone.centre, tumour.centreLps))).toBeLessThan(0.5);
      const structure = structures.find((entry) => entry.labelValue === tumour.labelValue);
      const figures = assessed
        .get(plan.id)
        ?.result?.zones.find((entry) => entry.model === 'table')
        ?.tumours.find((entry) => entry.structureId === structure?.id);
      const expectedMm = Math.min(zone.along, zone.across) - tumour.radiusMm;
      // Tolerance: both surfaces are voxelised, each within half a voxel diagonal.
      expect(Math.abs((figures?.minimalMarginMm ?? Number.NaN) - expectedMm)).toBeLessThanOrEqual(
        2 * halfVoxelDiagonalMm,
      );
    }
  });

  it('finds the clearance to each vessel tree that the tube geometry gives', () => {
    // Clearance of a straight path to a tube of radius r around a centre line: the smallest
    // segment–segment distance minus r (Ericson §5.1.9), taken over every branch.
    for (const plan of plans) {
      const { entry, target } = plan.applicators[0];
      const clearances = assessed.get(plan.id)?.result?.applicators[0].clearances ?? [];
      for (const tree of manifest.vessels) {
        let expectedMm = Number.POSITIVE_INFINITY;
        for (const branch of tree.branches) {
          for (let index = 1; index < branch.centreLineLps.length; index++) {
            const gap = closestDistanceBetweenSegments(
              entry,
              target,
              branch.centreLineLps[index - 1],
              branch.centreLineLps[index],
            );
            expectedMm = Math.min(expectedMm, Math.max(0, gap - branch.radiusMm));
          }
        }
        const measured = clearances.find((entry) => entry.kind === tree.kind);
        expect(measured, `${plan.name}: clearance to ${tree.kind}`).toBeDefined();
        expect(Math.abs((measured?.minDistanceMm ?? Number.NaN) - expectedMm)).toBeLessThanOrEqual(
          2 * halfVoxelDiagonalMm,
        );
      }
    }
  });

  it('names the vessel rule, the vein, the measured value and the threshold for the lateral plan', () => {
    const lateral = plans.find((plan) => plan.name.startsWith('Right lateral'));
    const result = assessed.get(lateral?.id ?? '')?.result;
    const measured = result?.applicators[0].clearances.find(
      (entry) => entry.kind === 'hepatic-vein',
    );
    const reason = result?.verdict.reasons.find(
      (entry) => entry.kind === 'hepatic-vein' && entry.rule.includes('clearance'),
    );
    expect(reason, 'a hepatic-vein clearance reason').toBeDefined();
    expect(reason?.value).toBeCloseTo(measured?.minDistanceMm ?? Number.NaN, 6);
    expect(reason?.threshold).toBe(5);
    expect(result?.verdict.level).not.toBe('acceptable');
  });

  it('serves the zones and tumour-surface margins for the viewer', async () => {
    const view = [...assessed.values()][0];
    const response = await presenter
      .get(`/api/assessments/${view.id}/display`)
      .buffer(true)
      .parse((res, callback) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () => callback(null, Buffer.concat(chunks)));
      });
    expect(response.status).toBe(200);
    const display = decodeAssessmentDisplay(new Uint8Array(response.body as Buffer));
    expect(display.zones.map((zone) => zone.model).sort()).toEqual(['bioheat', 'table']);
    const tableZoneMl = view.result?.zones.find((zone) => zone.model === 'table')?.volumeMl ?? 0;
    const tableMask = display.zones.find((zone) => zone.model === 'table');
    const voxels = tableMask?.mask.reduce((sum, value) => sum + value, 0) ?? 0;
    const [di, dj, dk] = tableMask?.geometry.spacingMm ?? [0, 0, 0];
    expect((voxels * di * dj * dk) / 1000).toBeCloseTo(tableZoneMl, 6);
    expect(display.margins.length).toBeGreaterThan(0);
  });

  it('rehearses every applicator: the assisted tip within the tolerance, free-hand reported', () => {
    for (const plan of plans) {
      const result = assessed.get(plan.id)?.result;
      expect(result?.rehearsalNote).toBeUndefined();
      expect(result?.rehearsal).toHaveLength(plan.applicators.length);
      const entry = result?.rehearsal?.[0];
      // Robot-assisted placement aims at a tip within about 2 mm (common practice; the demo
      // safety profile's tolerance); the free-hand error is reported whatever it is.
      expect(entry?.reached).toBe(true);
      expect(entry?.assistedTipErrorMm).toBeLessThan(2);
      expect(entry?.freehandTipErrorMm).toBeGreaterThanOrEqual(0);
      // The demo breathes 12 mm at the diaphragm (Lujan's model); a target in the liver moves
      // by a good part of that (30–100 %, as in the engine's own tests).
      expect(entry?.targetSiRangeMm).toBeGreaterThan(0.3 * 12);
      expect(entry?.targetSiRangeMm).toBeLessThanOrEqual(12);
      expect(entry?.meshResolution).toBe('medium');
      expect(entry?.strategy).toBe('pseudo-constraints');
      const depths = entry?.errorAlongPath.map((sample) => sample.depthMm) ?? [];
      expect(depths.length).toBeGreaterThan(10);
      for (let i = 1; i < depths.length; i++) expect(depths[i]).toBeGreaterThan(depths[i - 1]);
      // The verdict carries no rehearsal reason when the assisted tip is within tolerance.
      expect(result?.verdict.reasons.map((reason) => reason.rule)).not.toContain(
        'rehearsal-unreachable',
      );
    }
  });

  it('serves the replay of each rehearsal to whoever may see the case', async () => {
    const id = assessed.get(plans[0].id)?.id;
    const response = await presenter.get(`/api/assessments/${id}/rehearsal`);
    expect(response.status).toBe(200);
    const view = response.body as RehearsalReplayView;
    expect(view.caution).toMatch(/simulation estimate/);
    expect(view.replays.map((replay) => replay.mode).sort()).toEqual(['assisted', 'freehand']);
    for (const replay of view.replays) {
      const nodes = replay.frames[0].surfaceMm.length / 3;
      expect(Math.max(...replay.triangles)).toBeLessThan(nodes);
      expect(replay.frames.length).toBeGreaterThan(5);
      for (const frame of replay.frames) expect(frame.surfaceMm).toHaveLength(3 * nodes);
    }
    const member = await signedIn('member@emberline.test');
    expect((await member.get(`/api/assessments/${id}/rehearsal`)).status).toBe(200);
    const south = await signedIn('south@emberline.test');
    expect((await south.get(`/api/assessments/${id}/rehearsal`)).status).toBe(404);
  });

  it('answers an unchanged plan with the assessment already done, queueing nothing', async () => {
    const plan = plans[0];
    const before = await runtime.queue.jobStates();
    const response = await presenter.post(`/api/plans/${plan.id}/assessments`);
    expect(response.status).toBe(202);
    expect((response.body as AssessmentView).id).toBe(assessed.get(plan.id)?.id);
    expect((response.body as AssessmentView).status).toBe('done');
    expect(await runtime.queue.jobStates()).toEqual(before);
  });

  it('lets only the presenting physician of the case request an assessment', async () => {
    const member = await signedIn('member@emberline.test');
    expect((await member.post(`/api/plans/${plans[0].id}/assessments`)).status).toBe(403);
    expect((await member.get(`/api/assessments/${assessed.get(plans[0].id)?.id}`)).status).toBe(
      200,
    );
    const south = await signedIn('south@emberline.test');
    expect((await south.get(`/api/assessments/${assessed.get(plans[0].id)?.id}`)).status).toBe(404);
  });
});

describe('an assessment the engine refuses', () => {
  it('ends failed at once, with the reason, when the plan lies outside its zone table', async () => {
    const plan = plans.find((entry) => rowOf(entry).profile.modality === 'radiofrequency');
    if (!plan) throw new Error('no radiofrequency demo plan');
    const { profile } = rowOf(plan);
    // The administrator narrows the table after the plan was drafted: 200 W is now outside it.
    const narrowed = profile.zoneTable.filter((row) => row.powerW < plan.applicators[0].powerW);
    const patched = await admin.patch(`/api/admin/applicator-profiles/${profile.id}`, {
      zoneTable: narrowed,
    });
    expect(patched.status).toBe(200);
    const response = await presenter.post(`/api/plans/${plan.id}/assessments`);
    expect(response.status).toBe(202);
    const view = await settled((response.body as AssessmentView).id);
    expect(view.status).toBe('failed');
    expect(view.error).toMatch(/W/);
    const restored = await admin.patch(`/api/admin/applicator-profiles/${profile.id}`, {
      zoneTable: profile.zoneTable,
    });
    expect(restored.status).toBe(200);
  }, 120_000);
});
