import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type {
  AssessmentView,
  PlanView,
  SafetyProfileView,
  WatchAcknowledgement,
} from '@emberline/shared';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { MatCheckboxHarness } from '@angular/material/checkbox/testing';
import { MatSelectHarness } from '@angular/material/select/testing';
import { safetyProfile } from './testing/comparison-fixtures';
import { Subject } from 'rxjs';
import { textOf } from '../../testing/dom';
import { RealtimeSession, type RealtimeConnection } from '../core/realtime-session';
import { PlanAssessment } from './plan-assessment';

const planId = '9a8b7c6d-5e4f-4a3b-9c2d-1e0f9a8b7c6d';
const listUrl = `/api/plans/${planId}/assessments`;

const plan: PlanView = {
  id: planId,
  caseId: 'case-1',
  seriesId: 'series-1',
  name: 'Lateral approach',
  status: 'submitted',
  applicators: [],
  notes: null,
  author: { id: 'user-1', displayName: 'Dr Invented' },
  createdAt: '2026-11-20T09:00:00.000Z',
  updatedAt: '2026-11-20T09:00:00.000Z',
};

function assessment(overrides: Partial<AssessmentView>): AssessmentView {
  return {
    id: 'as-1',
    planId,
    status: 'queued',
    progress: 0,
    inputs: null,
    createdAt: '2026-11-20T10:00:00.000Z',
    updatedAt: '2026-11-20T10:00:00.000Z',
    ...overrides,
  };
}

const doneView = assessment({
  status: 'done',
  progress: 1,
  result: {
    engineVersion: 'test',
    applicators: [],
    zones: [],
    primaryZoneModel: 'table',
    heatSinks: [],
    verdict: { level: 'acceptable', reasons: [] },
  },
});

describe('PlanAssessment', () => {
  let fixture: ComponentFixture<PlanAssessment>;
  let http: HttpTestingController;

  function requestButton(): HTMLButtonElement | undefined {
    return Array.from((fixture.nativeElement as HTMLElement).querySelectorAll('button')).find(
      (button) => button.textContent?.includes('Request assessment'),
    );
  }

  async function open(
    canRequest: boolean,
    list: AssessmentView[],
    profiles: SafetyProfileView[] = [safetyProfile(3)],
  ): Promise<void> {
    fixture.componentRef.setInput('plan', plan);
    fixture.componentRef.setInput('canRequest', canRequest);
    TestBed.tick();
    http.expectOne(listUrl).flush(list);
    // Only the presenter, who may request, is offered a choice of safety profile.
    const profileReads = http.match('/api/safety-profiles');
    expect(profileReads).toHaveLength(canRequest ? 1 : 0);
    for (const read of profileReads) read.flush(profiles);
    await fixture.whenStable();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [PlanAssessment],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        {
          provide: RealtimeSession,
          useValue: {
            connection: signal<RealtimeConnection>('connecting'),
            watchAssessment: () => new Subject<WatchAcknowledgement>(),
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(PlanAssessment);
  });

  afterEach(() => http.verify());

  it('offers no request to someone who does not present the case, and shows the verdict', async () => {
    await open(false, [doneView]);
    expect(requestButton()).toBeUndefined();
    expect(textOf(fixture)).toContain('Acceptable');
  });

  it('lets the presenting physician request an assessment and then shows it queued', async () => {
    await open(true, []);
    expect(textOf(fixture)).toContain('Not assessed yet.');
    requestButton()?.click();
    const request = http.expectOne(listUrl);
    expect(request.request.method).toBe('POST');
    // No profile named: the server takes the default one.
    expect(request.request.body).toEqual({});
    request.flush(assessment({}), { status: 202, statusText: 'Accepted' });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Queued');
    expect(requestButton()?.disabled).toBe(true);
  });

  it('says so when the plan is unchanged and the server answers the existing result', async () => {
    await open(true, [doneView]);
    requestButton()?.click();
    http.expectOne(listUrl).flush(doneView, { status: 202, statusText: 'Accepted' });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('The plan has not changed since its last assessment');
  });

  it('says the plan was assessed on earlier inputs, lists what changed and offers a new assessment', async () => {
    const changed = {
      ...doneView,
      inputChanges: [
        {
          kind: 'applicator-profile' as const,
          message: 'Applicator profile “Probe A” is at version 3 (assessed on version 2).',
        },
        {
          kind: 'label-map' as const,
          message: 'The structures’ label map has been replaced since the assessment.',
        },
      ],
    };
    await open(true, [changed]);
    const notice = (fixture.nativeElement as HTMLElement).querySelector('[data-earlier-inputs]');
    expect(notice?.textContent).toContain('Assessed on earlier inputs');
    expect(
      Array.from(notice?.querySelectorAll('li') ?? []).map((item) => item.textContent),
    ).toEqual(changed.inputChanges.map((change) => change.message));
    const again = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('button'),
    ).find((button) => button.textContent?.includes('Assess again on today’s inputs'));
    again?.click();
    const request = http.expectOne(listUrl);
    expect(request.request.method).toBe('POST');
    request.flush(assessment({ id: 'as-2', createdAt: '2026-11-21T10:00:00.000Z' }), {
      status: 202,
      statusText: 'Accepted',
    });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Queued');
    expect(
      (fixture.nativeElement as HTMLElement).querySelector('[data-earlier-inputs]'),
    ).toBeNull();
  });

  it('shows no earlier-inputs notice when nothing changed since the assessment', async () => {
    await open(true, [doneView]);
    expect(
      (fixture.nativeElement as HTMLElement).querySelector('[data-earlier-inputs]'),
    ).toBeNull();
  });

  it('judges by the default safety profile unless the presenter chooses another', async () => {
    const other: SafetyProfileView = {
      ...safetyProfile(1),
      id: 'e4c3f0a1-5d67-4f8e-a091-a2b324d5e6f7',
      name: 'Invented stricter thresholds',
      isDefault: false,
    };
    await open(true, [], [safetyProfile(3), other]);
    const select = await TestbedHarnessEnvironment.loader(fixture).getHarness(MatSelectHarness);
    expect(await select.getValueText()).toBe('Invented thresholds, version 3 (default)');
    await select.open();
    await select.clickOptions({ text: 'Invented stricter thresholds, version 1' });
    requestButton()?.click();
    const request = http.expectOne(listUrl);
    expect(request.request.body).toEqual({ safetyProfileId: other.id });
    request.flush(assessment({}), { status: 202, statusText: 'Accepted' });
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Queued');
  });

  describe('the insertion rehearsal', () => {
    const label = 'Rehearse the insertion (adds about 15 s per applicator)';

    async function rehearsalBox(): Promise<MatCheckboxHarness> {
      return TestbedHarnessEnvironment.loader(fixture).getHarness(
        MatCheckboxHarness.with({ label }),
      );
    }

    it('is on by default, and the request then leaves the server’s default alone', async () => {
      await open(true, []);
      const box = await rehearsalBox();
      expect(await box.isChecked()).toBe(true);
      requestButton()?.click();
      const request = http.expectOne(listUrl);
      expect(request.request.body).not.toHaveProperty('rehearsal');
      request.flush(assessment({}), { status: 202, statusText: 'Accepted' });
      await fixture.whenStable();
    });

    it('switched off, asks the server to skip it: { rehearsal: false }', async () => {
      await open(true, []);
      const box = await rehearsalBox();
      await box.uncheck();
      expect(await box.isChecked()).toBe(false);
      requestButton()?.click();
      const request = http.expectOne(listUrl);
      expect(request.request.method).toBe('POST');
      expect(request.request.body).toEqual({ rehearsal: false });
      request.flush(assessment({}), { status: 202, statusText: 'Accepted' });
      await fixture.whenStable();
      expect(textOf(fixture)).toContain('Queued');
    });

    it('switched off and on again, sends no rehearsal key', async () => {
      await open(true, []);
      const box = await rehearsalBox();
      await box.uncheck();
      await box.check();
      requestButton()?.click();
      const request = http.expectOne(listUrl);
      expect(request.request.body).toEqual({});
      request.flush(assessment({}), { status: 202, statusText: 'Accepted' });
      await fixture.whenStable();
    });

    it('keeps the chosen safety profile beside the switch', async () => {
      const other: SafetyProfileView = {
        ...safetyProfile(1),
        id: 'e4c3f0a1-5d67-4f8e-a091-a2b324d5e6f7',
        name: 'Invented stricter thresholds',
        isDefault: false,
      };
      await open(true, [], [safetyProfile(3), other]);
      const loader = TestbedHarnessEnvironment.loader(fixture);
      const select = await loader.getHarness(MatSelectHarness);
      await select.open();
      await select.clickOptions({ text: 'Invented stricter thresholds, version 1' });
      await (await rehearsalBox()).uncheck();
      requestButton()?.click();
      const request = http.expectOne(listUrl);
      expect(request.request.body).toEqual({ safetyProfileId: other.id, rehearsal: false });
      request.flush(assessment({}), { status: 202, statusText: 'Accepted' });
      await fixture.whenStable();
    });

    it('is not offered to someone who does not present the case', async () => {
      await open(false, [doneView]);
      const loader = TestbedHarnessEnvironment.loader(fixture);
      expect(await loader.getAllHarnesses(MatCheckboxHarness)).toHaveLength(0);
    });
  });

  it('offers no choice of safety profile when there is only one', async () => {
    await open(true, []);
    const loader = TestbedHarnessEnvironment.loader(fixture);
    expect(await loader.getAllHarnesses(MatSelectHarness)).toHaveLength(0);
  });

  it('tells the refusal beside the button', async () => {
    await open(true, []);
    requestButton()?.click();
    http.expectOne(listUrl).flush(
      {
        type: 'about:blank',
        title: 'Conflict',
        status: 409,
        detail: 'No default safety profile is set; an administrator must choose one first.',
      },
      { status: 409, statusText: 'Conflict' },
    );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain(
      'The assessment was not requested. No default safety profile is set',
    );
  });
});
