import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { clinicalCaution, type StructureView } from '@emberline/shared';
import { PlanComparison } from './plan-comparison';
import {
  done,
  inputs,
  plan,
  resultA,
  resultB,
  seriesId,
  tumourId,
} from './testing/comparison-fixtures';
import { ballDisplay, displayBody } from './testing/display-fixtures';
import { type HarnessLoader } from '@angular/cdk/testing';
import { ComparisonRowHarness, PlanComparisonHarness } from './testing/plan-comparison-harness';

describe('PlanComparison', () => {
  let fixture: ComponentFixture<PlanComparison>;
  let http: HttpTestingController;
  let comparison: PlanComparisonHarness;
  /** Finds harnesses inside the comparison. */
  let loader: HarnessLoader;
  const plans = [
    plan('plan-a', 'Lateral approach'),
    plan('plan-b', 'Subcostal approach'),
    plan('plan-c', 'Draft C', 'draft'),
  ];

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [PlanComparison],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(PlanComparison);
    fixture.componentRef.setInput('plans', plans);
    await fixture.whenStable();
    // Plan A ran on version 3 of the safety profile, its current one; plan B on version 2, and
    // its applicator profile has changed since.
    http.expectOne('/api/plans/plan-a/assessments').flush([done('as-a', 'plan-a', resultA)]);
    http.expectOne('/api/plans/plan-b/assessments').flush([
      done('as-b', 'plan-b', resultB, {
        inputs: inputs(2),
        inputChanges: [
          {
            kind: 'applicator-profile',
            message: 'Applicator profile “Invented probe” is at version 3 (assessed on version 2).',
          },
        ],
      }),
    ]);
    http.expectOne('/api/plans/plan-c/assessments').flush([]);
    // The structures and the pictures are pending tasks: the fixture is
    // not stable until they answer.
    TestBed.tick();
    const structures: Partial<StructureView>[] = [
      { id: tumourId, seriesId, name: 'Tumour segment VIII', kind: 'tumour' },
    ];
    http.expectOne(`/api/series/${seriesId}/structures`).flush(structures);
    http
      .expectOne('/api/assessments/as-a/display')
      .flush(displayBody(ballDisplay([0, 0, 0], 15, 9)));
    http.expectOne('/api/assessments/as-b/display').flush(
      new TextEncoder().encode(
        JSON.stringify({
          title: 'Not Found',
          status: 404,
          detail: 'The display data was not found.',
        }),
      ).buffer,
      { status: 404, statusText: 'Not Found' },
    );
    await fixture.whenStable();
    loader = TestbedHarnessEnvironment.loader(fixture);
    comparison = await TestbedHarnessEnvironment.harnessForFixture(fixture, PlanComparisonHarness);
  });

  afterEach(() => http.verify());

  it('opens with the clinical caution, then the summary band, then the table', async () => {
    expect(await comparison.getCautionText()).toContain(clinicalCaution);
    expect(await comparison.getPartsInOrder()).toEqual(['caution', 'summary', 'table', 'pending']);
  });

  it('is told apart by the plans it compares, not by those left out', async () => {
    // The fixture's root element hosts the comparison itself: its predicate is asked directly.
    expect(
      await PlanComparisonHarness.with({ comparedPlan: /Subcostal/ }).evaluate(comparison),
    ).toBe(true);
    expect(await PlanComparisonHarness.with({ comparedPlan: 'Draft C' }).evaluate(comparison)).toBe(
      false,
    );
  });

  it('gives every assessed plan a column and lists the unassessed one below', async () => {
    expect(await comparison.getComparedPlanNames()).toEqual([
      'Lateral approach',
      'Subcostal approach',
    ]);
    expect(await (await comparison.getRow({ key: 'path-length' })).getCellTexts()).toHaveLength(2);
    expect(await comparison.getPendingPlans()).toEqual([
      { name: 'Draft C', reason: 'Not assessed yet.' },
    ]);
  });

  it('puts the unit in every figure row label', async () => {
    const rows = await comparison.getRows();
    expect(rows.length).toBeGreaterThan(10);
    for (const row of rows) {
      if (['verdict', 'inputs'].includes(await row.getGroup())) continue;
      expect(await row.getLabel()).toMatch(
        /\((mm|°|count|mL|%|length inside, mm|diameter mm)[^)]*\)/,
      );
    }
  });

  it('marks the shorter path and the larger clearance, with a sign and words', async () => {
    const path = await loader.getHarness(
      ComparisonRowHarness.with({ key: 'path-length', group: 'applicator-0' }),
    );
    const [pathA, pathB] = await path.getCells();
    expect(pathA).toEqual({ text: '112.5 mm of 150.0 mm', isBest: false });
    expect(pathB).toEqual({ text: 'Better value: 96.2 mm of 150.0 mm', isBest: true });
    expect(await path.getDirection()).toBe('Smaller is better');

    const clearance = await comparison.getRow({ key: 'clearance-portal-vein' });
    // Each clearance shows its conservative bound in brackets (engine 1.1.0); plan B's result
    // has none, as results from before bounds.
    expect(await clearance.getLabel()).toContain(
      'Nearest clearance, portal vein (mm; in brackets the least it could be',
    );
    expect(await clearance.getBestColumns()).toEqual([0]);
    const [clearanceA, clearanceB] = await clearance.getCellTexts();
    expect(clearanceA).toContain('Better value: 12.4 mm (≥ 11.6 mm) at 60.2 mm along the path');
    expect(clearanceB).toBe('3.1 mm at 71.5 mm along the path');
  });

  it('marks no plan where both show the same angulation', async () => {
    const angulation = await comparison.getRow({ key: 'angulation' });
    expect(await angulation.getCellTexts()).toEqual(['12.3°', '12.3°']);
    expect(await angulation.getBestColumns()).toEqual([]);
  });

  it('ranks a negative margin below a positive one and prints a true minus sign', async () => {
    const margin = await comparison.getRow({ key: `margin-${tumourId}` });
    expect(await margin.getLabel()).toContain('Tumour segment VIII: minimal ablative margin (mm;');
    expect(await margin.getBestColumns()).toEqual([0]);
    expect((await margin.getCellTexts())[1]).toBe('\u22122.4 mm');
  });

  it('counts a collateral kind the zone does not reach as none, and marks the smaller volume', async () => {
    const collateral = await comparison.getRow({ key: 'collateral-gallbladder' });
    const [collateralA, collateralB] = await collateral.getCells();
    expect(collateralA.text).toBe('0.12 mL');
    expect(collateralB.text).toContain('0.00 mL');
    expect(collateralB.isBest).toBe(true);
  });

  it('shows each verdict with its reasons: rule, structure kind, measured value and threshold with units', async () => {
    const [verdictA, verdictB] = await (await comparison.getRow({ key: 'verdict' })).getCellTexts();
    expect(verdictA).toContain('Acceptable with cautions');
    expect(verdictA).toContain('Caution · Clearance · Gallbladder');
    expect(verdictA).toContain('Measured 8.0 mm, threshold 10.0 mm');

    expect(verdictB).toContain('Not acceptable');
    expect(verdictB).toContain('Refusal · Critical structure on the path · Gallbladder');
    expect(verdictB).toContain('Measured 4.2 mm, threshold 0.0 mm');
    expect(verdictB).toContain('Caution · Clearance · Portal vein');
    expect(verdictB).toContain('Measured 3.1 mm, threshold 5.0 mm');
    expect(verdictB).toContain('The applicator passes 3.1 mm from the portal vein.');
  });

  it('flags a critical structure on the path in words and names the verdict zone model', async () => {
    const traversed = await comparison.getRow({ key: 'traversed' });
    expect((await traversed.getCellTexts())[1]).toContain('Gallbladder: 4.2 mm Critical');
    expect(await (await comparison.getRow({ key: 'primary-zone' })).getCellTexts()).toEqual([
      'Applicator zone table',
      'Applicator zone table',
    ]);
    expect((await (await comparison.getRow({ key: 'heat-sinks' })).getCellTexts())[1]).toBe(
      'Hepatic vein: 6.5 mm wide, 3.2 mm from the zone',
    );
  });

  it('names the safety profile and applicator profiles with their versions and the zone table’s source', async () => {
    const safety = await comparison.getRow({ key: 'safety-profile', group: 'inputs' });
    expect(await safety.getCellTexts()).toEqual([
      'Invented thresholds, version 3',
      'Invented thresholds, version 2',
    ]);
    const applicators = await comparison.getRow({ key: 'applicator-profiles', group: 'inputs' });
    expect((await applicators.getCellTexts())[0]).toBe(
      'Invented probe, version 2; zone table: Ex vivo measurements (Invented bench series)',
    );
    const changes = await comparison.getRow({ key: 'input-changes' });
    const [changesA, changesB] = await changes.getCellTexts();
    expect(changesA).toBe('Nothing: assessed on today’s inputs');
    expect(changesB).toContain('is at version 3 (assessed on version 2)');
  });

  it('folds and unfolds a group of rows, and all groups at once', async () => {
    const group = await comparison.getGroup({ key: 'applicator-0' });
    expect(await group.getTitle()).toBe('Applicator: trajectory');
    expect(await group.isExpanded()).toBe(true);
    await group.toggle();
    expect(await group.isExpanded()).toBe(false);
    expect(await group.isFolded()).toBe(true);
    // Folded rows stay in the page (hidden on screen, printed on paper).
    expect(await group.getRows({ key: 'angulation' })).toHaveLength(1);

    await comparison.foldAllGroups();
    for (const each of await comparison.getGroups()) expect(await each.isExpanded()).toBe(false);
    await comparison.unfoldAllGroups();
    for (const each of await comparison.getGroups()) expect(await each.isExpanded()).toBe(true);
  });

  it('sums up each plan in one line: verdict, clearance against its minimum, coverage, margin with its bound, zone model', async () => {
    const lines = await comparison.getSummaryLines();
    expect(await Promise.all(lines.map((line) => line.getPlanName()))).toEqual([
      'Lateral approach',
      'Subcostal approach',
    ]);
    const lineA = await comparison.getSummaryLine({ planName: 'Lateral approach' });
    expect(await lineA.getVerdict()).toContain('Acceptable with cautions');
    expect(await lineA.getVerdict()).toContain('1 caution');
    // The profile version the assessment ran on is the current one: 10 mm from the gallbladder.
    expect(await lineA.getFigure('clearance')).toEqual({
      value: 'Gallbladder 8.0 mm (≥ 7.2 mm)',
      note: 'Minimum 10.0 mm: 2.0 mm short',
      isShort: true,
    });
    expect(await lineA.getFigure('coverage')).toEqual({
      value: '100.0 %',
      note: 'Tumour segment VIII',
      isShort: false,
    });
    // 6.2 mm meets the 5 mm target; its bound, 4.9 mm, does not.
    expect(await lineA.getFigure('margin')).toEqual({
      value: '6.2 mm (≥ 4.9 mm)',
      note: 'Target 5.0 mm: met, but not by its bound',
      isShort: true,
    });
    expect((await lineA.getFigure('zone-model')).value).toBe('Applicator zone table');
    expect(await lineA.isOnEarlierInputs()).toBe(false);

    const lineB = await comparison.getSummaryLine({ planName: /Subcostal/ });
    expect(await lineB.getVerdict()).toContain('3 refusals · 1 caution');
    // Version 2 is not at hand: the minimum comes from the verdict's own reason.
    expect(await lineB.getFigure('clearance')).toEqual({
      value: 'Portal vein 3.1 mm',
      note: 'Minimum 5.0 mm: 1.9 mm short',
      isShort: true,
    });
    expect((await lineB.getFigure('coverage')).isShort).toBe(true);
    expect(await lineB.getFigure('margin')).toEqual({
      value: '\u22122.4 mm',
      note: 'Minimum 0.0 mm: 2.4 mm short',
      isShort: true,
    });
    expect(await lineB.isOnEarlierInputs()).toBe(true);
  });

  it('draws each plan’s slice from its display data, and says when it cannot', async () => {
    const lineA = await comparison.getSummaryLine({ planName: 'Lateral approach' });
    expect(await lineA.getPictureState()).toBe('drawn');
    // The needle lies in the axial plane: the picture is the axial slice, patient left to the
    // right and posterior down (the radiological habit).
    expect(await lineA.getPictureCaption()).toContain(
      'Through the needle, axial · L to the right, P down',
    );
    expect(await lineA.getPictureDescription()).toContain(
      'table zone outlined (solid, used for the verdict)',
    );
    const lineB = await comparison.getSummaryLine({ planName: /Subcostal/ });
    expect(await lineB.getPictureState()).toBe('failed');
    expect(await lineB.getPictureCaption()).toContain('The display data was not found.');
  });
});
