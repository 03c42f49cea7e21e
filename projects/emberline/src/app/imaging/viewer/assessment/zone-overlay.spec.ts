import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import {
  encodeAssessmentDisplay,
  type AssessmentResult,
  type AssessmentView,
  type PlanView,
  type VolumeGeometry,
} from '@emberline/shared';
import { ViewerSession } from '../viewer-session';
import { ZoneOverlay } from './zone-overlay';

const geometry: VolumeGeometry = {
  dimensions: [2, 2, 1],
  spacingMm: [0.8, 0.8, 2.5],
  originLps: [-10, -5, 20],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};

const plan = { id: 'plan-1', name: 'Segment VIII' } as PlanView;

function result(reasons: AssessmentResult['verdict']['reasons']): AssessmentResult {
  const tumour = {
    structureId: 'tumour-1',
    volumeMl: 7.2,
    coveredPercent: 100,
    minimalMarginMm: 3.4,
    surfaceBelowTargetPercent: 41.5,
  };
  return {
    engineVersion: 'test',
    applicators: [],
    zones: [
      { model: 'table', volumeMl: 28.9, tumours: [tumour], collateral: [] },
      {
        model: 'bioheat',
        volumeMl: 24.1,
        tumours: [{ ...tumour, minimalMarginMm: 1.2 }],
        collateral: [],
      },
    ],
    primaryZoneModel: 'bioheat',
    heatSinks: [],
    verdict: { level: 'acceptable-with-cautions', reasons },
  };
}

function assessment(
  id: string,
  status: AssessmentView['status'],
  reasons: AssessmentResult['verdict']['reasons'] = [],
): AssessmentView {
  return {
    id,
    planId: plan.id,
    status,
    progress: status === 'done' ? 1 : 0.3,
    inputs: null,
    result: status === 'done' ? result(reasons) : undefined,
    createdAt: '2026-04-14T10:00:00.000Z',
    updatedAt: '2026-04-14T10:01:00.000Z',
  };
}

const marginTargetReason = {
  rule: 'margin-target',
  kind: 'tumour' as const,
  value: 1.2,
  threshold: 5,
  severity: 'caution' as const,
  message: 'Minimal margin 1.2 mm under the 5.0 mm target.',
};

function displayBody(): ArrayBuffer {
  const bytes = encodeAssessmentDisplay({
    zones: [
      { model: 'table', geometry, mask: Uint8Array.from([1, 1, 0, 1]) },
      { model: 'bioheat', geometry, mask: Uint8Array.from([1, 0, 0, 0]) },
    ],
    margins: [
      {
        structureId: 'tumour-1',
        model: 'bioheat',
        pointsLps: Float32Array.from([-10, -5, 20]),
        marginMm: Float32Array.from([1.2]),
      },
    ],
  });
  return bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
}

describe('ZoneOverlay', () => {
  let http: HttpTestingController;
  let overlay: ZoneOverlay;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        ViewerSession,
        ZoneOverlay,
      ],
    });
    http = TestBed.inject(HttpTestingController);
    overlay = TestBed.inject(ZoneOverlay);
  });

  afterEach(() => http.verify());

  it('draws the newest done assessment, its primary zone first, with the verdict’s target', () => {
    overlay.open(plan);
    expect(overlay.phase()).toBe('loading');
    http
      .expectOne('/api/plans/plan-1/assessments')
      .flush([assessment('a-2', 'running'), assessment('a-1', 'done', [marginTargetReason])]);
    http.expectOne('/api/assessments/a-1/display').flush(displayBody());

    expect(overlay.phase()).toBe('ready');
    expect(overlay.assessment()?.id).toBe('a-1');
    expect(overlay.newer()?.status).toBe('running');
    expect(overlay.zones().map((zone) => zone.model)).toEqual(['table', 'bioheat']);
    expect([...overlay.shownZones()]).toEqual(['bioheat']);
    expect(overlay.marginModel()).toBe('bioheat');
    expect(overlay.target()).toEqual({ mm: 5, source: 'verdict' });
    expect(overlay.shownMargins()).toHaveLength(1);
    expect(overlay.tumourRows().map((row) => row.minimalMarginMm)).toEqual([1.2]);
    // No reason to ask the safety profile: the verdict names the target.
    http.expectNone('/api/safety-profiles/default');
  });

  it('reads the default safety profile’s target when the verdict names none', () => {
    overlay.open(plan);
    http.expectOne('/api/plans/plan-1/assessments').flush([assessment('a-1', 'done')]);
    http.expectOne('/api/assessments/a-1/display').flush(displayBody());
    http.expectOne('/api/safety-profiles/default').flush({ marginTargetMm: 10 });
    expect(overlay.target()).toEqual({ mm: 10, source: 'default-profile' });
    expect(overlay.scale()).toEqual({ lowMm: -10, targetMm: 10, highMm: 20 });
  });

  it('asks for no display of a plan whose assessment has not finished', () => {
    overlay.open(plan);
    http.expectOne('/api/plans/plan-1/assessments').flush([assessment('a-1', 'queued')]);
    http.expectNone('/api/assessments/a-1/display');
    expect(overlay.phase()).toBe('unassessed');
    expect(overlay.newer()?.status).toBe('queued');
  });

  it('reads a display once: the plan opened again reuses it', () => {
    for (let time = 0; time < 2; time++) {
      overlay.open(plan);
      http
        .expectOne('/api/plans/plan-1/assessments')
        .flush([assessment('a-1', 'done', [marginTargetReason])]);
      if (time === 0) http.expectOne('/api/assessments/a-1/display').flush(displayBody());
    }
    expect(overlay.phase()).toBe('ready');
    expect(overlay.display()?.zones).toHaveLength(2);
  });

  it('says why when the display cannot be read', () => {
    overlay.open(plan);
    http
      .expectOne('/api/plans/plan-1/assessments')
      .flush([assessment('a-1', 'done', [marginTargetReason])]);
    const problem = new TextEncoder().encode(
      JSON.stringify({
        title: 'Not found',
        status: 404,
        detail: 'The display data of this assessment was not found.',
      }),
    );
    http
      .expectOne('/api/assessments/a-1/display')
      .flush(problem.buffer, { status: 404, statusText: 'Not Found' });
    expect(overlay.phase()).toBe('failed');
    expect(overlay.problem()).toContain('display data');
  });
});
