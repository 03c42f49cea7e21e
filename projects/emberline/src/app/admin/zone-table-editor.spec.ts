import { ChangeDetectionStrategy, Component, provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { FormGroup, ReactiveFormsModule } from '@angular/forms';
import { zoneTableSchema, type ZoneTableRow } from '@emberline/shared';
import axe from 'axe-core';
import { buttonNamed, element, textOf, typeInto } from '../../testing/dom';
import { ZoneTableEditor } from './zone-table-editor';
import { zoneTableForm, zoneTableRows, type ZoneColumn } from './zone-table-form';

// Invented rows for the editor, not any applicator's data.
const twoRows: ZoneTableRow[] = [
  { powerW: 60, timeS: 300, zoneLengthMm: 30, zoneWidthMm: 22, tipOffsetMm: 4 },
  { powerW: 60, timeS: 600, zoneLengthMm: 40, zoneWidthMm: 30, tipOffsetMm: 5 },
];

@Component({
  selector: 'em-zone-table-host',
  imports: [ReactiveFormsModule, ZoneTableEditor],
  template: `<form [formGroup]="form">
    <em-zone-table-editor [table]="form.controls.zoneTable" />
  </form>`,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
class ZoneTableHost {
  readonly form = new FormGroup({ zoneTable: zoneTableForm(twoRows) });
}

describe('ZoneTableEditor', () => {
  let fixture: ComponentFixture<ZoneTableHost>;

  function table() {
    return fixture.componentInstance.form.controls.zoneTable;
  }

  function cell(row: number, column: ZoneColumn): string {
    return `#zone-${row}-${column}`;
  }

  function errorIn(row: number, column: ZoneColumn): string {
    const field = element(fixture, cell(row, column)).closest('mat-form-field');
    return field?.querySelector('mat-error')?.textContent?.trim() ?? '';
  }

  function rowMessage(row: number): string {
    return (
      (fixture.nativeElement as HTMLElement)
        .querySelector(`#zone-${row}-message`)
        ?.textContent?.trim() ?? ''
    );
  }

  function bodyRowCount(): number {
    return (fixture.nativeElement as HTMLElement).querySelectorAll('tbody tr:not(.row-message)')
      .length;
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [ZoneTableHost],
      providers: [provideZonelessChangeDetection()],
    }).compileComponents();
    fixture = TestBed.createComponent(ZoneTableHost);
    await fixture.whenStable();
  });

  it('flags a row that repeats the power and time of an earlier row, as the shared schema does', async () => {
    typeInto(fixture, cell(1, 'timeS'), '300');
    await fixture.whenStable();

    expect(rowMessage(1)).toBe(
      'Row 2 repeats 60 W for 300 s of row 1; each power and time may appear once.',
    );
    expect(rowMessage(0)).toBe('');
    expect(element(fixture, cell(1, 'timeS')).closest('tr')?.classList).toContain('is-duplicate');
    // The server parses with the same shared schema: it refuses the same row (path [1]).
    const rows = zoneTableRows(table());
    const parsed = zoneTableSchema.safeParse(rows);
    expect(parsed.success).toBe(false);
    expect(parsed.error?.issues.map((issue) => issue.path)).toEqual([[1]]);

    typeInto(fixture, cell(1, 'timeS'), '480');
    await fixture.whenStable();
    expect(rowMessage(1)).toBe('');
    expect(table().valid).toBe(true);
  });

  it('marks a non-positive power or width and an out-of-range tip offset in their cells', async () => {
    typeInto(fixture, cell(0, 'powerW'), '0');
    typeInto(fixture, cell(0, 'zoneWidthMm'), '-5');
    typeInto(fixture, cell(1, 'tipOffsetMm'), '-60');
    await fixture.whenStable();

    // Bounds of the shared zoneTableRowSchema: power and width > 0, tip offset from -50 mm.
    expect(errorIn(0, 'powerW')).toBe('Must be above 0');
    expect(errorIn(0, 'zoneWidthMm')).toBe('Must be above 0');
    expect(errorIn(1, 'tipOffsetMm')).toBe('At least -50');
    expect(errorIn(0, 'timeS')).toBe('');
    expect(table().valid).toBe(false);
  });

  it('marks an empty cell as required once it has been left', async () => {
    typeInto(fixture, cell(0, 'zoneLengthMm'), '');
    await fixture.whenStable();

    expect(errorIn(0, 'zoneLengthMm')).toBe('Required');
    expect(zoneTableRows(table())).toBeNull();
  });

  it('adds an empty row and removes a row, never the last one', async () => {
    element(fixture, '.add-row').click();
    await fixture.whenStable();
    expect(bodyRowCount()).toBe(3);
    expect(element<HTMLInputElement>(fixture, cell(2, 'powerW')).value).toBe('');

    element(fixture, '[aria-label="Remove row 1"]').click();
    element(fixture, '[aria-label="Remove row 1"]').click();
    await fixture.whenStable();
    expect(bodyRowCount()).toBe(1);
    expect(element<HTMLButtonElement>(fixture, '[aria-label="Remove row 1"]').disabled).toBe(true);
    expect(textOf(fixture)).toContain('1 of at most 200 rows');
  });

  it('shows how far each zone reaches beyond the tip and draws the selected one', async () => {
    // Ellipsoid 40 mm long centred 5 mm behind the tip: its far end is 40/2 − 5 = 15 mm beyond
    // the tip (geometry of the row's definition); 30 mm long, 4 mm behind: 15 − 4 = 11 mm.
    expect(element(fixture, '#zone-1-beyond').textContent?.trim()).toBe('15');
    expect(element(fixture, '#zone-0-beyond').textContent?.trim()).toBe('11');

    element(fixture, cell(1, 'tipOffsetMm')).dispatchEvent(
      new FocusEvent('focusin', { bubbles: true }),
    );
    typeInto(fixture, cell(1, 'tipOffsetMm'), '-3');
    await fixture.whenStable();
    // Centre 3 mm beyond the tip: 20 + 3 = 23 mm beyond it.
    expect(element(fixture, '#zone-1-beyond').textContent?.trim()).toBe('23');
    expect(element(fixture, '#zone-preview-caption').textContent).toContain(
      'Row 2: 40 × 30 mm zone, centred 3 mm beyond the tip; it reaches 23 mm beyond the tip.',
    );
    const ellipse = element(fixture, 'svg ellipse');
    const radiusX = Number(ellipse.getAttribute('rx'));
    const radiusY = Number(ellipse.getAttribute('ry'));
    // Drawn to scale: the semi-axes keep the zone's 40 : 30 proportion.
    expect(radiusX / radiusY).toBeCloseTo(40 / 30, 6);
  });

  it('sorts the rows by power, then time', async () => {
    table()
      .at(0)
      .setValue({ powerW: 80, timeS: 300, zoneLengthMm: 35, zoneWidthMm: 25, tipOffsetMm: 4 });
    await fixture.whenStable();
    buttonNamed(fixture, 'Sort by power and time').click();
    await fixture.whenStable();

    expect(zoneTableRows(table())?.map((row) => [row.powerW, row.timeS])).toEqual([
      [60, 600],
      [80, 300],
    ]);
    expect(element<HTMLInputElement>(fixture, cell(0, 'powerW')).value).toBe('60');
  });

  it('shows an error the server put on a row although the parent changed it', async () => {
    table().at(1).setErrors({ server: 'The zone is wider than the maker allows' });
    await fixture.whenStable();

    expect(rowMessage(1)).toBe('The zone is wider than the maker allows');
  });

  it('has no accessibility violations that axe finds', async () => {
    // jsdom lays nothing out, so contrast is left to the end-to-end run in a real browser.
    const result = await axe.run(fixture.nativeElement as HTMLElement, {
      rules: { 'color-contrast': { enabled: false } },
    });
    expect(result.violations.map((violation) => violation.id)).toEqual([]);
  });
});
