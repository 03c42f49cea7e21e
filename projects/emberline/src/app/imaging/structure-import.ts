import {
  ChangeDetectionStrategy,
  Component,
  computed,
  inject,
  input,
  output,
  signal,
} from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  maxLabelValue,
  structureKindLabels,
  structureKinds,
  type StructureKind,
  type StructureLabels,
  type StructureView,
} from '@emberline/shared';
import { problemMessage } from '../core/problem';
import {
  ConfirmDialog,
  type ConfirmDialogData,
  type ConfirmDialogResult,
} from '../core/confirm-dialog';
import { byteSize } from './byte-size';
import { StructureApi } from './structure-api';

/**
 * Import of a label map for one series — NIfTI-1 (.nii or .nii.gz) or DICOM SEG (.dcm, whose
 * segment descriptions name the structures and suggest their kinds) — with the kinds of its
 * labels given row by row. Labels left out keep the suggested kind or none, to be mapped
 * afterwards. Segments of a SEG that overlapped are listed after the import, with the structure
 * that kept the voxels.
 */
@Component({
  selector: 'em-structure-import',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatError,
    MatInput,
    MatSelect,
    MatOption,
    MatButton,
    MatIconButton,
    MatIcon,
    MatProgressBar,
  ],
  templateUrl: './structure-import.html',
  styleUrl: './structure-import.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StructureImport {
  private readonly api = inject(StructureApi);
  private readonly formBuilder = inject(FormBuilder);
  private readonly dialog = inject(MatDialog);

  readonly seriesId = input.required<string>();
  /** Distinguishes the ids of this form from those of other series' forms on the page. */
  readonly idPrefix = input.required<string>();
  readonly imported = output<StructureView[]>();
  /** The series' structures now: a new import replaces them, after a confirmation naming them. */
  readonly existing = input<readonly StructureView[]>([]);

  protected readonly kindOptions = structureKinds.map((kind) => ({
    kind,
    label: structureKindLabels[kind],
  }));
  protected readonly file = signal<File | null>(null);
  protected readonly fileSummary = computed(() => {
    const file = this.file();
    return file ? `${file.name}, ${byteSize(file.size)}` : 'No file chosen.';
  });
  protected readonly isImporting = signal(false);
  protected readonly errorText = signal('');
  protected readonly doneText = signal('');
  /** What the server resolved of overlapping SEG segments in the last import, in words. */
  protected readonly overlapMessages = signal<readonly string[]>([]);

  protected readonly rows = this.formBuilder.array([this.row()]);

  protected choose(event: Event): void {
    const file = (event.target as HTMLInputElement).files?.[0] ?? null;
    this.file.set(file);
    this.errorText.set('');
    this.doneText.set('');
    this.overlapMessages.set([]);
  }

  protected addRow(): void {
    this.rows.push(this.row());
  }

  protected removeRow(index: number): void {
    this.rows.removeAt(index);
  }

  protected submit(event: Event, picker: HTMLInputElement): void {
    event.preventDefault();
    const file = this.file();
    if (!file) {
      this.errorText.set('Choose a label map: a .nii, .nii.gz or .dcm (DICOM SEG) file.');
      return;
    }
    if (!/\.(nii(\.gz)?|dcm)$/i.test(file.name)) {
      this.errorText.set(
        `${file.name} is not a label map: choose a .nii, .nii.gz or .dcm (DICOM SEG) file.`,
      );
      return;
    }
    const labels = this.mapping();
    if (typeof labels === 'string') {
      this.rows.markAllAsTouched();
      this.errorText.set(labels);
      return;
    }
    const existing = this.existing();
    if (!existing.length) {
      this.send(file, labels, picker);
      return;
    }
    const data: ConfirmDialogData = {
      title: 'Replace the label map of this series?',
      message:
        'The new label map replaces the current one. Label values it keeps keep their kind and ' +
        'name (unless the rows above name them anew); these structures go if it lacks their ' +
        'label value, with their lesion links:',
      items: existing.map(
        (structure) =>
          `${structure.name} (label ${structure.labelValue}` +
          (structure.lesionLabel ? `, linked to the lesion in ${structure.lesionLabel})` : ')'),
      ),
      confirmLabel: 'Replace label map',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, ConfirmDialogResult>(ConfirmDialog, { data })
      .afterClosed()
      .subscribe((result) => {
        if (result === true) this.send(file, labels, picker);
      });
  }

  private send(file: File, labels: StructureLabels, picker: HTMLInputElement): void {
    this.isImporting.set(true);
    this.errorText.set('');
    this.doneText.set('');
    this.overlapMessages.set([]);
    this.api.importLabelMap(this.seriesId(), file, labels).subscribe({
      next: ({ structures, overlaps }) => {
        this.isImporting.set(false);
        picker.value = '';
        this.file.set(null);
        this.rows.clear();
        this.rows.push(this.row());
        const count = structures.length === 1 ? '1 structure' : `${structures.length} structures`;
        this.doneText.set(`${count} imported.`);
        this.overlapMessages.set(overlaps.map((overlap) => overlap.message));
        this.imported.emit(structures);
      },
      error: (error: unknown) => {
        this.isImporting.set(false);
        this.errorText.set(`The label map was not imported. ${problemMessage(error)}`);
      },
    });
  }

  /** The rows as the `labels` field wants them, or a sentence on what is wrong with them. */
  private mapping(): StructureLabels | string {
    const mapping: StructureLabels = {};
    for (const { labelValue, kind } of this.rows.getRawValue()) {
      if (labelValue === null && kind === null) continue;
      if (labelValue === null || kind === null) {
        return 'Each row needs both a label value and a kind; empty a row to leave it out.';
      }
      if (!Number.isInteger(labelValue) || labelValue < 1 || labelValue > maxLabelValue) {
        return `Label values are whole numbers from 1 to ${maxLabelValue}; ${labelValue} is not.`;
      }
      const key = String(labelValue);
      if (key in mapping) return `Label ${key} is given twice; give each label one kind.`;
      mapping[key] = kind;
    }
    return mapping;
  }

  private row() {
    return this.formBuilder.group({
      labelValue: this.formBuilder.control<number | null>(null, [
        Validators.min(1),
        Validators.max(maxLabelValue),
      ]),
      kind: this.formBuilder.control<StructureKind | null>(null),
    });
  }
}
