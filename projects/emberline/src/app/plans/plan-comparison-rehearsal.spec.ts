import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { MatDialog } from '@angular/material/dialog';
import { clinicalCaution, type AssessmentResult } from '@emberline/shared';
import { RehearsalReplayDialog } from '../imaging/viewer/rehearsal/rehearsal-replay-dialog';
import { notRehearsedText, rehearsalGroup } from './comparison-rehearsal-rows';
import { PlanComparison } from './plan-comparison';
import { rehearsalCaution } from './rehearsal-caution';
import { done, inputs, plan, resultA, resultB, seriesId } from './testing/comparison-fixtures';
import { PlanComparisonHarness } from './testing/plan-comparison-harness';
import { RehearsalCellHarness } from './testing/rehearsal-cell-harness';
import { notReachedRehearsal, rehearsal } from './testing/rehearsal-fixtures';

const notFound = () => ({
  body: new TextEncoder().encode(
    JSON.stringify({ title: 'Not Found', status: 404, detail: 'No display data.' }),
  ).buffer,
  options: { status: 404, statusText: 'Not Found' },
});

describe('PlanComparison: the insertion rehearsal group', () => {
  let fixture: ComponentFixture<PlanComparison>;
  let http: HttpTestingController;
  let comparison: PlanComparisonHarness;
  const open = vi.fn();
  const switchedOff = 'The rehearsal was switched off for this assessment.';
  const results: Record<string, AssessmentResult> = {
    'plan-a': { ...resultA, rehearsal: [rehearsal()] },
    'plan-b': { ...resultB, rehearsal: [notReachedRehearsal()] },
    'plan-c': { ...resultA, rehearsalNote: switchedOff },
    'plan-d': resultB,
  };
  // Plan A was judged by a profile whose rehearsal tolerance is 0.5 mm; the others' inputs
  // carry none (assessed before the tolerance existed).
  const judgedBy = inputs(3);
  const strictInputs = {
    ...judgedBy,
    safetyProfile: { ...judgedBy.safetyProfile, rehearsalToleranceMm: 0.5 },
  };
  const plans = [
    plan('plan-a', 'Lateral approach'),
    plan('plan-b', 'Subcostal approach'),
    plan('plan-c', 'Intercostal approach'),
    plan('plan-d', 'Anterior approach'),
  ];

  beforeEach(async () => {
    open.mockReset();
    await TestBed.configureTestingModule({
      imports: [PlanComparison],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MatDialog, useValue: { open } },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(PlanComparison);
    fixture.componentRef.setInput('plans', plans);
    await fixture.whenStable();
    for (const { id } of plans) {
      const overrides = id === 'plan-a' ? { inputs: strictInputs } : {};
      http
        .expectOne(`/api/plans/${id}/assessments`)
        .flush([done(`as-${id}`, id, results[id], overrides)]);
    }
    TestBed.tick();
    http.expectOne(`/api/series/${seriesId}/structures`).flush([]);
    for (const { id } of plans) {
      const { body, options } = notFound();
      http.expectOne(`/api/assessments/as-${id}/display`).flush(body, options);
    }
    await fixture.whenStable();
    comparison = await TestbedHarnessEnvironment.harnessForFixture(fixture, PlanComparisonHarness);
  });

  afterEach(() => http.verify());

  it('is a group of its own that folds, carrying the rehearsal’s caution', async () => {
    const group = await comparison.getGroup({ key: 'rehearsal' });
    expect(await group.getTitle()).toBe('Insertion rehearsal');
    expect(await group.getCautionText()).toBe(rehearsalCaution);
    expect(rehearsalCaution).toContain('simulation estimate');
    expect(rehearsalCaution).toContain('not a prediction');
    expect(rehearsalCaution).toContain('The treating team decides');
    // The comparison's own caution stays once, at its head.
    expect(await comparison.getCautionText()).toContain(clinicalCaution);
    expect(await comparison.getPartsInOrder()).toEqual(['caution', 'summary', 'table']);

    expect(
      (await group.getRows()).length,
      'free-hand, assisted, motion, path for the one applicator',
    ).toBe(4);
    await group.toggle();
    expect(await group.isFolded()).toBe(true);
  });

  it('shows each plan’s predicted tip errors and target motion, and "not reached" with the reason', async () => {
    const freehand = await comparison.getRow({ key: 'rehearsal-freehand-0' });
    expect(await freehand.getLabel()).toBe('Predicted tip error, free-hand (mm)');
    expect(await freehand.getCellTexts()).toEqual([
      '3.4 mm',
      '6.1 mm',
      switchedOff,
      notRehearsedText,
    ]);
    // Simulation estimates are not ranked: no plan is marked better on them.
    expect(await freehand.getDirection()).toBe('');
    expect(await freehand.getBestColumns()).toEqual([]);

    const assisted = await comparison.getRow({ key: 'rehearsal-assisted-0' });
    const [assistedA, assistedB] = await assisted.getCellTexts();
    expect(assistedA).toBe('0.4 mm');
    expect(assistedB).toBe(
      'Not reached The target moved out of the needle’s reach at 40 mm depth.',
    );

    const motion = await comparison.getRow({ key: 'rehearsal-motion-0' });
    expect((await motion.getCellTexts())[0]).toBe('10.5 mm largest 9.8 mm superior–inferior range');
  });

  it('plots the tip error along the insertion with the run’s settings in each rehearsed column', async () => {
    const path = await comparison.getRow({ key: 'rehearsal-path-0' });
    expect(await path.getLabel()).toBe('Tip error along the insertion (mm, against depth in mm)');
    const cells =
      await TestbedHarnessEnvironment.loader(fixture).getAllHarnesses(RehearsalCellHarness);
    expect(cells).toHaveLength(2);
    const [cellA, cellB] = cells;
    expect(await cellA.getPlotLabel()).toContain(
      'applicator 1 of Lateral approach: tip error (mm) against insertion depth (mm)',
    );
    expect(await cellA.getSampleLines()).toHaveLength(5);
    expect(await cellA.getRunLine()).toBe(
      'Mesh 2886 nodes (medium), strategy: all trial moves through one factorised contact ' +
        'system, breathing 12 mm / 4 s, control step 52 ms',
    );
    expect(await cellB.getRunLine()).toContain(
      'Mesh 611 nodes (coarse; smallest angle 11.7°, aspect ratio ≤ 7.2)',
    );
    expect(await cellB.getRunLine()).toContain('breathing 15 mm / 4.5 s');
    expect(await cellB.getPlotLabel()).toContain('the target not reached');
    const [, , cellC, cellD] = await path.getCellTexts();
    expect(cellC).toBe(switchedOff);
    expect(cellD).toBe(notRehearsedText);
  });

  it('draws the plot’s line at the rehearsal tolerance the assessment was judged by, else at 2 mm', async () => {
    const [cellA, cellB] =
      await TestbedHarnessEnvironment.loader(fixture).getAllHarnesses(RehearsalCellHarness);
    const labelA = await cellA.getPlotLabel();
    expect(labelA).toContain('Dashed line at the threshold, 0.5 mm.');
    // Plan A's assisted run passes 0.5 mm at 40 mm depth (0.55 mm there), never 2 mm.
    expect(labelA).toContain('first above the threshold at 40.0 mm depth');
    expect(await cellB.getPlotLabel()).toContain('Dashed line at the threshold, 2.0 mm.');
  });

  it('opens the 3D replay of the applicator’s rehearsal in that plan’s assessment', async () => {
    const [, cellB] =
      await TestbedHarnessEnvironment.loader(fixture).getAllHarnesses(RehearsalCellHarness);
    await cellB.openReplay();
    await vi.waitFor(() => expect(open).toHaveBeenCalledTimes(1));
    const [component, config] = open.mock.calls[0];
    expect(component).toBe(RehearsalReplayDialog);
    expect(config.data).toEqual({
      assessmentId: 'as-plan-b',
      applicatorIndex: 0,
      planName: 'Subcostal approach',
    });
  });
});

describe('rehearsalGroup', () => {
  const column = (id: string, result: AssessmentResult) => ({
    plan: plan(id, id),
    assessment: done(`as-${id}`, id, result),
    result,
  });

  it('holds one row saying why when no plan was rehearsed', () => {
    const group = rehearsalGroup([
      column('a', resultA),
      column('b', { ...resultB, rehearsalNote: 'Stopped at the time limit.' }),
    ]);
    expect(group.rows.map((row) => row.key)).toEqual(['rehearsal-missing']);
    expect(group.rows[0].cells).toEqual([
      { type: 'absent', text: notRehearsedText },
      { type: 'absent', text: 'Stopped at the time limit.' },
    ]);
    expect(group.caution).toBe(rehearsalCaution);
  });

  it('names the applicators when a plan has more than one, and says which one was not rehearsed', () => {
    const two: AssessmentResult = {
      ...resultA,
      applicators: [...resultA.applicators, ...resultA.applicators],
      rehearsal: [rehearsal({ applicatorIndex: 1 })],
    };
    const group = rehearsalGroup([column('a', two)]);
    expect(group.rows.map((row) => row.label)).toContain(
      'Applicator 2: Predicted tip error, free-hand (mm)',
    );
    const first = group.rows.find((row) => row.key === 'rehearsal-freehand-0');
    expect(first?.cells).toEqual([{ type: 'absent', text: 'Not rehearsed for this applicator' }]);
  });
});
