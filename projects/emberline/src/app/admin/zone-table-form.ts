import {
  FormArray,
  FormControl,
  FormGroup,
  Validators,
  type AbstractControl,
  type ValidationErrors,
} from '@angular/forms';
import { zoneTableRowSchema, type ZoneTableRow } from '@emberline/shared';
import { zodValidator } from '../core/zod-validator';

/** The five numbers of one zone table row, as the form holds them (empty while not typed). */
export interface ZoneRowControls {
  powerW: FormControl<number | null>;
  timeS: FormControl<number | null>;
  zoneLengthMm: FormControl<number | null>;
  zoneWidthMm: FormControl<number | null>;
  tipOffsetMm: FormControl<number | null>;
}
export type ZoneRowForm = FormGroup<ZoneRowControls>;
export type ZoneTableForm = FormArray<ZoneRowForm>;
export type ZoneColumn = keyof ZoneRowControls;

/** The most rows the shared zone table schema accepts. */
export const zoneTableMaximumRows = 200;

/** Columns in table order, each with its label and unit. */
export const zoneColumns: readonly { name: ZoneColumn; label: string; unit: string }[] = [
  { name: 'powerW', label: 'Power', unit: 'W' },
  { name: 'timeS', label: 'Time', unit: 's' },
  { name: 'zoneLengthMm', label: 'Zone length', unit: 'mm' },
  { name: 'zoneWidthMm', label: 'Zone width', unit: 'mm' },
  { name: 'tipOffsetMm', label: 'Tip offset', unit: 'mm' },
];

/** A row repeating the power and time of an earlier row (indices from 0). */
export interface ZoneRowDuplicate {
  index: number;
  firstIndex: number;
}

const rowShape = zoneTableRowSchema.shape;

/** One row's controls, each checked by the shared row schema's rule for that column. */
export function zoneRowForm(row?: ZoneTableRow): ZoneRowForm {
  const cell = (column: ZoneColumn) =>
    new FormControl<number | null>(row?.[column] ?? null, [
      Validators.required,
      zodValidator(rowShape[column]),
    ]);
  return new FormGroup<ZoneRowControls>({
    powerW: cell('powerW'),
    timeS: cell('timeS'),
    zoneLengthMm: cell('zoneLengthMm'),
    zoneWidthMm: cell('zoneWidthMm'),
    tipOffsetMm: cell('tipOffsetMm'),
  });
}

/**
 * The zone table's rows as a form array. Its own errors mirror the shared zone table schema:
 * `rule` for too few or too many rows, `duplicates` for a (power, time) pair given twice.
 */
export function zoneTableForm(rows: readonly ZoneTableRow[]): ZoneTableForm {
  const initial = rows.length ? rows.map((row) => zoneRowForm(row)) : [zoneRowForm()];
  return new FormArray<ZoneRowForm>(initial, zoneTableValidator);
}

/** The rows as the API takes them, or null while any cell is empty. */
export function zoneTableRows(table: ZoneTableForm): ZoneTableRow[] | null {
  const rows: ZoneTableRow[] = [];
  for (const { powerW, timeS, zoneLengthMm, zoneWidthMm, tipOffsetMm } of table.getRawValue()) {
    if (
      powerW === null ||
      timeS === null ||
      zoneLengthMm === null ||
      zoneWidthMm === null ||
      tipOffsetMm === null
    ) {
      return null;
    }
    rows.push({ powerW, timeS, zoneLengthMm, zoneWidthMm, tipOffsetMm });
  }
  return rows;
}

/** The rows whose power and time an earlier row already holds; rows not yet filled are skipped. */
export function duplicateZoneRows(
  rows: readonly { powerW: number | null; timeS: number | null }[],
): ZoneRowDuplicate[] {
  const firstIndexOf = new Map<string, number>();
  const duplicates: ZoneRowDuplicate[] = [];
  rows.forEach(({ powerW, timeS }, index) => {
    if (powerW === null || timeS === null) return;
    const key = `${powerW}|${timeS}`;
    const firstIndex = firstIndexOf.get(key);
    if (firstIndex === undefined) firstIndexOf.set(key, index);
    else duplicates.push({ index, firstIndex });
  });
  return duplicates;
}

function zoneTableValidator(control: AbstractControl): ValidationErrors | null {
  const rows = (control as ZoneTableForm).getRawValue();
  if (rows.length === 0) return { rule: 'The zone table needs at least one row' };
  if (rows.length > zoneTableMaximumRows) {
    return { rule: `The zone table may hold at most ${zoneTableMaximumRows} rows` };
  }
  const duplicates = duplicateZoneRows(rows);
  return duplicates.length ? { duplicates } : null;
}
