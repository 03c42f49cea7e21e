import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import {
  clinicalCaution,
  type ApplicatorSafety,
  type AssessmentResult,
  type AssessmentView,
  type PlanView,
  type StructureView,
} from '@emberline/shared';
import { textOf } from '../../testing/dom';
import { PlanComparison } from './plan-comparison';

// Invented figures for two plans on one invented series; not patient data.
const seriesId = 'b1f0c7de-2a34-4c5b-9d6e-7f8091a2b3c4';
const tumourId = 'c2a1d8ef-3b45-4d6c-8e7f-809102b3c4d5';

function plan(id: string, name: string, status: PlanView['status'] = 'assessed'): PlanView {
  return {
    id,
    caseId: 'case-1',
    seriesId,
    name,
    status,
    applicators: [],
    notes: null,
    author: { id: 'user-1', displayName: 'Dr Invented' },
    createdAt: '2026-11-20T09:00:00.000Z',
    updatedAt: '2026-11-20T09:00:00.000Z',
  };
}

function applicator(overrides: Partial<ApplicatorSafety>): ApplicatorSafety {
  return {
    pathLengthMm: 100,
    workingLengthMm: 150,
    angulationDeg: 10,
    clearances: [],
    traversed: [],
    capsuleCrossings: 1,
    parenchymaBeforeTumourMm: 20,
    ...overrides,
  };
}

const resultA: AssessmentResult = {
  engineVersion: 'test',
  applicators: [
    applicator({
      pathLengthMm: 112.46,
      angulationDeg: 12.3,
      clearances: [
        { kind: 'portal-vein', minDistanceMm: 12.4, atMm: 60.2 },
        { kind: 'gallbladder', minDistanceMm: 8, atMm: 40 },
      ],
      traversed: [{ kind: 'liver', lengthMm: 62, critical: false }],
    }),
  ],
  zones: [
    {
      model: 'table',
      volumeMl: 24.5,
      tumours: [
        {
          structureId: tumourId,
          volumeMl: 3.2,
          coveredPercent: 100,
          minimalMarginMm: 6.2,
          surfaceBelowTargetPercent: 35,
        },
      ],
      collateral: [{ kind: 'gallbladder', volumeMl: 0.12 }],
    },
  ],
  primaryZoneModel: 'table',
  heatSinks: [],
  verdict: {
    level: 'acceptable-with-cautions',
    reasons: [
      {
        rule: 'margin-target',
        kind: 'tumour',
        value: 6.2,
        threshold: 10,
        severity: 'caution',
        message: 'The tumour: minimal ablative margin 6.2 mm in the table zone.',
      },
    ],
  },
};

const resultB: AssessmentResult = {
  engineVersion: 'test',
  applicators: [
    applicator({
      pathLengthMm: 96.2,
      angulationDeg: 12.3,
      clearances: [{ kind: 'portal-vein', minDistanceMm: 3.1, atMm: 71.5 }],
      traversed: [
        { kind: 'liver', lengthMm: 48, critical: false },
        { kind: 'gallbladder', lengthMm: 4.2, critical: true },
      ],
    }),
  ],
  zones: [
    {
      model: 'table',
      volumeMl: 20.1,
      tumours: [
        {
          structureId: tumourId,
          volumeMl: 3.2,
          coveredPercent: 91.5,
          minimalMarginMm: -2.4,
          surfaceBelowTargetPercent: 80,
        },
      ],
      collateral: [],
    },
  ],
  primaryZoneModel: 'table',
  heatSinks: [{ kind: 'hepatic-vein', diameterMm: 6.5, distanceMm: 3.2 }],
  verdict: {
    level: 'not-acceptable',
    reasons: [
      {
        rule: 'critical-traversal',
        kind: 'gallbladder',
        value: 4.2,
        threshold: 0,
        severity: 'refusal',
        message: 'The applicator runs 4.2 mm through the gallbladder.',
      },
      {
        rule: 'clearance',
        kind: 'portal-vein',
        value: 3.1,
        threshold: 5,
        severity: 'caution',
        message: 'The applicator passes 3.1 mm from the portal vein.',
      },
    ],
  },
};

function done(id: string, planId: string, result: AssessmentResult): AssessmentView {
  return {
    id,
    planId,
    status: 'done',
    progress: 1,
    result,
    createdAt: '2026-11-20T10:00:00.000Z',
    updatedAt: '2026-11-20T10:01:00.000Z',
  };
}

describe('PlanComparison', () => {
  let fixture: ComponentFixture<PlanComparison>;
  let http: HttpTestingController;
  const plans = [
    plan('plan-a', 'Lateral approach'),
    plan('plan-b', 'Subcostal approach'),
    plan('plan-c', 'Draft C', 'draft'),
  ];

  function element(): HTMLElement {
    return fixture.nativeElement as HTMLElement;
  }

  function rowCells(rowKey: string): HTMLElement[] {
    const row = element().querySelector(`tr[data-row="${rowKey}"]`);
    if (!row) throw new Error(`No row ${rowKey}`);
    return Array.from(row.querySelectorAll<HTMLElement>('td'));
  }

  function rowLabel(rowKey: string): string {
    return (
      element()
        .querySelector(`tr[data-row="${rowKey}"] th`)
        ?.textContent?.replace(/\s+/g, ' ')
        .trim() ?? ''
    );
  }

  const cellText = (cell: HTMLElement) => (cell.textContent ?? '').replace(/\s+/g, ' ').trim();

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
    http.expectOne('/api/plans/plan-a/assessments').flush([done('as-a', 'plan-a', resultA)]);
    http.expectOne('/api/plans/plan-b/assessments').flush([done('as-b', 'plan-b', resultB)]);
    http.expectOne('/api/plans/plan-c/assessments').flush([]);
    // The structures resource is a pending task: the fixture is not stable until it answers.
    TestBed.tick();
    const structures: Partial<StructureView>[] = [
      { id: tumourId, seriesId, name: 'Tumour segment VIII', kind: 'tumour' },
    ];
    http.expectOne(`/api/series/${seriesId}/structures`).flush(structures);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  it('shows the clinical caution above the table', () => {
    const caution = element().querySelector('em-clinical-caution');
    const table = element().querySelector('table');
    expect(caution?.textContent).toContain(clinicalCaution);
    if (!caution || !table) throw new Error('The caution or the table is missing');
    // DOCUMENT_POSITION_FOLLOWING: the table comes after the caution.
    expect(caution.compareDocumentPosition(table) & Node.DOCUMENT_POSITION_FOLLOWING).toBeTruthy();
  });

  it('gives every assessed plan a column and lists the unassessed one below', () => {
    const headings = Array.from(element().querySelectorAll('thead th[scope="col"] .plan-name')).map(
      (heading) => heading.textContent?.trim(),
    );
    expect(headings).toEqual(['Lateral approach', 'Subcostal approach']);
    expect(rowCells('path-length')).toHaveLength(2);
    const pending = element().querySelector('.pending li[data-pending-plan="plan-c"]');
    expect(pending?.textContent).toContain('Draft C');
    expect(pending?.textContent).toContain('Not assessed yet.');
  });

  it('puts the unit in every row label', () => {
    const labels = Array.from(element().querySelectorAll('tbody tr[data-row] th[scope="row"]')).map(
      (header) => header.textContent ?? '',
    );
    expect(labels.length).toBeGreaterThan(10);
    for (const label of labels) {
      if (label.includes('Verdict') || label.includes('Zone model')) continue;
      expect(label).toMatch(/\((mm|°|count|mL|%|length inside, mm|diameter mm)[^)]*\)/);
    }
  });

  it('marks the shorter path and the larger clearance, with a sign and words', () => {
    const [pathA, pathB] = rowCells('path-length');
    expect(cellText(pathA)).toBe('112.5 mm of 150.0 mm');
    expect(pathB.classList).toContain('best');
    expect(pathA.classList).not.toContain('best');
    expect(pathB.querySelector('mat-icon')?.textContent).toBe('star');
    expect(cellText(pathB)).toContain('Better value: 96.2 mm of 150.0 mm');
    expect(rowLabel('path-length')).toContain('Smaller is better');

    const [clearanceA, clearanceB] = rowCells('clearance-portal-vein');
    expect(rowLabel('clearance-portal-vein')).toContain(
      'Nearest clearance, portal vein (mm; at mm',
    );
    expect(clearanceA.classList).toContain('best');
    expect(cellText(clearanceA)).toContain('Better value: 12.4 mm at 60.2 mm along the path');
    expect(cellText(clearanceB)).toBe('3.1 mm at 71.5 mm along the path');
  });

  it('marks no plan where both show the same angulation', () => {
    const cells = rowCells('angulation');
    expect(cells.map(cellText)).toEqual(['12.3°', '12.3°']);
    expect(cells.some((cell) => cell.classList.contains('best'))).toBe(false);
  });

  it('ranks a negative margin below a positive one and prints a true minus sign', () => {
    const [marginA, marginB] = rowCells(`margin-${tumourId}`);
    expect(rowLabel(`margin-${tumourId}`)).toContain(
      'Tumour segment VIII: minimal ablative margin (mm)',
    );
    expect(marginA.classList).toContain('best');
    expect(cellText(marginB)).toBe('\u22122.4 mm');
  });

  it('counts a collateral kind the zone does not reach as none, and marks the smaller volume', () => {
    const [collateralA, collateralB] = rowCells('collateral-gallbladder');
    expect(cellText(collateralA)).toBe('0.12 mL');
    expect(cellText(collateralB)).toContain('0.00 mL');
    expect(collateralB.classList).toContain('best');
  });

  it('shows each verdict with its reasons: rule, structure kind, measured value and threshold with units', () => {
    const [verdictA, verdictB] = rowCells('verdict');
    expect(cellText(verdictA)).toContain('Acceptable with cautions');
    expect(cellText(verdictA)).toContain('Caution · Margin target · Tumour');
    expect(cellText(verdictA)).toContain('Measured 6.2 mm, threshold 10.0 mm');

    expect(cellText(verdictB)).toContain('Not acceptable');
    expect(cellText(verdictB)).toContain('Refusal · Critical structure on the path · Gallbladder');
    expect(cellText(verdictB)).toContain('Measured 4.2 mm, threshold 0.0 mm');
    expect(cellText(verdictB)).toContain('Caution · Clearance · Portal vein');
    expect(cellText(verdictB)).toContain('Measured 3.1 mm, threshold 5.0 mm');
    expect(cellText(verdictB)).toContain('The applicator passes 3.1 mm from the portal vein.');
  });

  it('flags a critical structure on the path in words and names the verdict zone model', () => {
    const [, traversedB] = rowCells('traversed');
    expect(cellText(traversedB)).toContain('Gallbladder: 4.2 mm priority_high Critical');
    expect(rowCells('primary-zone').map(cellText)).toEqual([
      'Applicator zone table',
      'Applicator zone table',
    ]);
    expect(cellText(rowCells('heat-sinks')[1])).toBe(
      'Hepatic vein: 6.5 mm wide, 3.2 mm from the zone',
    );
    expect(textOf(fixture)).toContain('Not in the assessed region');
  });
});
