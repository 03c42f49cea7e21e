import {
  ChangeDetectionStrategy,
  Component,
  Injector,
  afterNextRender,
  computed,
  effect,
  inject,
  input,
  signal,
} from '@angular/core';
import { ReactiveFormsModule } from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatError, MatFormField, MatSuffix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { FieldError } from '../core/field-error';
import {
  zoneColumns,
  zoneRowForm,
  zoneTableMaximumRows,
  type ZoneRowDuplicate,
  type ZoneRowForm,
  type ZoneTableForm,
} from './zone-table-form';

/** The drawing of one row's zone: millimetres mapped to the SVG's own units. */
interface ZonePreview {
  rowNumber: number;
  caption: string;
  shaftEndX: number;
  tipX: number;
  centreX: number;
  radiusX: number;
  radiusY: number;
}

const previewWidth = 320;
const previewHeight = 120;
const previewMargin = 12;

/**
 * The zone table of an applicator profile: one row per power and time, with the zone the maker
 * gives for it (an ellipsoid along the shaft, its centre some millimetres behind the tip).
 * Rows are added and removed here; every cell is checked by the shared row schema, and a power
 * and time given twice is flagged on the later row. The controls belong to the parent's form,
 * so the server's field errors (`zoneTable.2.timeS`) land on the cell they name.
 */
@Component({
  selector: 'em-zone-table-editor',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatError,
    MatSuffix,
    MatInput,
    MatButton,
    MatIconButton,
    MatIcon,
    FieldError,
  ],
  templateUrl: './zone-table-editor.html',
  styleUrl: './zone-table-editor.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ZoneTableEditor {
  private readonly injector = inject(Injector);

  /** The rows, owned by the parent form. */
  readonly table = input.required<ZoneTableForm>();

  protected readonly columns = zoneColumns;
  protected readonly maximumRows = zoneTableMaximumRows;
  protected readonly previewWidth = previewWidth;
  protected readonly previewHeight = previewHeight;
  /** Bumped on every value, status or touch event of the table, so signals see form changes. */
  private readonly revision = signal(0);
  private readonly selectedIndex = signal(0);

  private readonly duplicates = computed(() => {
    this.revision();
    const found = this.table().errors?.['duplicates'] as ZoneRowDuplicate[] | undefined;
    return new Map((found ?? []).map((duplicate) => [duplicate.index, duplicate.firstIndex]));
  });
  protected readonly tableError = computed(() => {
    this.revision();
    const errors = this.table().errors;
    const message: unknown = errors?.['server'] ?? errors?.['rule'];
    return typeof message === 'string' ? message : '';
  });
  protected readonly preview = computed(() => {
    this.revision();
    const rows = this.table().controls;
    const index = Math.min(this.selectedIndex(), rows.length - 1);
    return index >= 0 ? zonePreview(rows[index], index) : null;
  });

  constructor() {
    effect((onCleanup) => {
      // Form controls are not signals: follow their events so the OnPush view and the computed
      // messages update when the parent (or a server answer) changes the rows.
      const subscription = this.table().events.subscribe(() => this.revision.update((n) => n + 1));
      onCleanup(() => subscription.unsubscribe());
    });
  }

  protected rowMessage(row: ZoneRowForm, index: number): string {
    const firstIndex = this.duplicates().get(index);
    if (firstIndex !== undefined) {
      const { powerW, timeS } = row.getRawValue();
      return `Row ${index + 1} repeats ${powerW} W for ${timeS} s of row ${firstIndex + 1}; each power and time may appear once.`;
    }
    const server: unknown = row.errors?.['server'];
    return typeof server === 'string' ? server : '';
  }

  protected isDuplicate(index: number): boolean {
    return this.duplicates().has(index);
  }

  /** How far the zone reaches past the tip (negative: it ends behind the tip), mm. */
  protected beyondTipText(row: ZoneRowForm): string {
    const { zoneLengthMm, tipOffsetMm } = row.getRawValue();
    if (zoneLengthMm === null || tipOffsetMm === null || row.controls.zoneLengthMm.invalid) {
      return '—';
    }
    return millimetres(zoneLengthMm / 2 - tipOffsetMm);
  }

  protected select(index: number): void {
    this.selectedIndex.set(index);
  }

  protected addRow(): void {
    const table = this.table();
    if (table.length >= zoneTableMaximumRows) return;
    table.push(zoneRowForm());
    table.markAsDirty();
    const index = table.length - 1;
    this.selectedIndex.set(index);
    afterNextRender(() => document.getElementById(`zone-${index}-powerW`)?.focus(), {
      injector: this.injector,
    });
  }

  protected removeRow(index: number): void {
    const table = this.table();
    if (table.length <= 1) return;
    table.removeAt(index);
    table.markAsDirty();
    this.selectedIndex.update((selected) => Math.min(selected, table.length - 1));
  }

  /** Orders the rows by power, then time; rows not yet filled go last. */
  protected sortRows(): void {
    const table = this.table();
    const key = (row: ZoneRowForm) => {
      const { powerW, timeS } = row.getRawValue();
      return [powerW ?? Number.POSITIVE_INFINITY, timeS ?? Number.POSITIVE_INFINITY];
    };
    const sorted = [...table.controls].sort((a, b) => {
      const [powerA, timeA] = key(a);
      const [powerB, timeB] = key(b);
      return powerA - powerB || timeA - timeB;
    });
    table.clear({ emitEvent: false });
    for (const row of sorted) table.push(row, { emitEvent: false });
    table.updateValueAndValidity();
    table.markAsDirty();
  }
}

/** The selected row's zone drawn to scale, shaft coming from the left; null until it is valid. */
function zonePreview(row: ZoneRowForm, index: number): ZonePreview | null {
  const { zoneLengthMm, zoneWidthMm, tipOffsetMm } = row.getRawValue();
  const { controls } = row;
  if (
    zoneLengthMm === null ||
    zoneWidthMm === null ||
    tipOffsetMm === null ||
    controls.zoneLengthMm.invalid ||
    controls.zoneWidthMm.invalid ||
    controls.tipOffsetMm.invalid
  ) {
    return null;
  }
  // Positions along the shaft in mm from the tip, positive beyond it.
  const halfLength = zoneLengthMm / 2;
  const proximalMm = -tipOffsetMm - halfLength;
  const distalMm = -tipOffsetMm + halfLength;
  const startMm = Math.min(proximalMm, 0) - 10;
  const endMm = Math.max(distalMm, 0) + 5;
  const scale = Math.min(
    (previewWidth - 2 * previewMargin) / (endMm - startMm),
    (previewHeight - 2 * previewMargin) / zoneWidthMm,
  );
  const x = (mm: number) => previewMargin + (mm - startMm) * scale;
  const beyond = distalMm;
  const centreText =
    tipOffsetMm >= 0
      ? `centred ${millimetres(tipOffsetMm)} mm behind the tip`
      : `centred ${millimetres(-tipOffsetMm)} mm beyond the tip`;
  const reachText =
    beyond >= 0
      ? `reaches ${millimetres(beyond)} mm beyond the tip`
      : `ends ${millimetres(-beyond)} mm behind the tip`;
  return {
    rowNumber: index + 1,
    caption: `Row ${index + 1}: ${millimetres(zoneLengthMm)} × ${millimetres(zoneWidthMm)} mm zone, ${centreText}; it ${reachText}.`,
    shaftEndX: previewMargin,
    tipX: x(0),
    centreX: x(-tipOffsetMm),
    radiusX: halfLength * scale,
    radiusY: (zoneWidthMm / 2) * scale,
  };
}

/** A length in millimetres to one decimal, without a trailing ".0". */
function millimetres(value: number): string {
  return String(Math.round(value * 10) / 10);
}
