import { ChangeDetectionStrategy, Component, inject, input, output, signal } from '@angular/core';
import {
  FormBuilder,
  ReactiveFormsModule,
  Validators,
  type FormGroupDirective,
} from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatError, MatFormField, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import { MatDialog } from '@angular/material/dialog';
import { MatTableModule } from '@angular/material/table';
import {
  couinaudSegments,
  createLesionSchema,
  lesionKindLabels,
  lesionKinds,
  type CaseDetail,
  type CouinaudSegment,
  type LesionKind,
  type LesionView,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { zodValidator } from '../core/zod-validator';
import { CaseApi } from './case-api';
import { segmentLabels } from './clinical-labels';
import { TypedCellDef } from '../core/typed-cell-def';
import {
  ConfirmDialog,
  type ConfirmDialogData,
  type ConfirmDialogResult,
} from '../core/confirm-dialog';

/**
 * The lesions of a case by Couinaud segment, longest diameter and type; add, correct (the form
 * takes the lesion) and remove (after a confirmation naming the structures that lose their link).
 */
@Component({
  selector: 'em-lesion-list',
  imports: [
    ReactiveFormsModule,
    MatTableModule,
    TypedCellDef,
    MatFormField,
    MatLabel,
    MatError,
    MatSuffix,
    MatInput,
    MatSelect,
    MatOption,
    MatButton,
    MatIconButton,
    MatIcon,
    FieldError,
  ],
  templateUrl: './lesion-list.html',
  styleUrl: './lesion-list.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LesionList {
  private readonly api = inject(CaseApi);
  private readonly dialog = inject(MatDialog);

  readonly caseId = input.required<string>();
  readonly lesions = input.required<readonly LesionView[]>();
  readonly canEdit = input(false);
  readonly changed = output<CaseDetail>();

  protected readonly segments = couinaudSegments;
  protected readonly segmentLabels = segmentLabels;
  protected readonly kinds = lesionKinds;
  protected readonly kindLabels = lesionKindLabels;
  protected readonly isBusy = signal(false);
  protected readonly errorText = signal('');
  /** The lesion the form corrects, or null while it adds one. */
  protected readonly editing = signal<LesionView | null>(null);

  protected readonly form = inject(FormBuilder).group({
    segment: [null as CouinaudSegment | null, Validators.required],
    diameterMm: [
      null as number | null,
      [Validators.required, zodValidator(createLesionSchema.shape.diameterMm)],
    ],
    kind: [null as LesionKind | null, Validators.required],
  });

  protected columns(): string[] {
    return this.canEdit()
      ? ['segment', 'diameterMm', 'kind', 'actions']
      : ['segment', 'diameterMm', 'kind'];
  }

  protected add(formDirective: FormGroupDirective): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const { segment, diameterMm, kind } = this.form.getRawValue();
    if (segment === null || diameterMm === null || kind === null) return;
    const editing = this.editing();
    this.isBusy.set(true);
    this.errorText.set('');
    const request = editing
      ? this.api.updateLesion(this.caseId(), editing.id, { segment, diameterMm, kind })
      : this.api.addLesion(this.caseId(), { segment, diameterMm, kind });
    request.subscribe({
      next: (detail) => {
        this.isBusy.set(false);
        this.editing.set(null);
        formDirective.resetForm();
        this.changed.emit(detail);
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        const unmatched = applyFieldErrors(this.form, error);
        this.errorText.set(
          [
            editing ? 'The lesion was not corrected.' : 'The lesion was not added.',
            problemMessage(error),
            ...unmatched,
          ].join(' '),
        );
      },
    });
  }

  /** Puts the lesion into the form to correct it. */
  protected edit(lesion: LesionView): void {
    this.editing.set(lesion);
    this.errorText.set('');
    this.form.reset({ segment: lesion.segment, diameterMm: lesion.diameterMm, kind: lesion.kind });
  }

  protected cancelEdit(formDirective: FormGroupDirective): void {
    this.editing.set(null);
    this.errorText.set('');
    formDirective.resetForm();
  }

  /** Asks first, naming the lesion and the structures that lose their link to it. */
  protected confirmRemove(lesion: LesionView): void {
    const name = `segment ${lesion.segment}, ${lesion.diameterMm} mm (${this.kindLabels[lesion.kind]})`;
    const links = lesion.linkedStructures ?? [];
    const data: ConfirmDialogData = {
      title: `Remove the lesion in ${name}?`,
      message: links.length
        ? 'The lesion is removed from the Summary. These structures lose their link to it and get a new suggestion:'
        : 'The lesion is removed from the Summary. No structure is linked to it.',
      items: links.map(
        (link) =>
          `${link.name} (${link.seriesLabel}; ${link.isConfirmed ? 'confirmed link' : 'suggested link'})`,
      ),
      confirmLabel: 'Remove lesion',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, ConfirmDialogResult>(ConfirmDialog, { data })
      .afterClosed()
      .subscribe((result) => {
        if (result === true) this.remove(lesion);
      });
  }

  private remove(lesion: LesionView): void {
    this.isBusy.set(true);
    this.errorText.set('');
    this.api.removeLesion(this.caseId(), lesion.id).subscribe({
      next: (detail) => {
        this.isBusy.set(false);
        this.changed.emit(detail);
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        this.errorText.set(['The lesion was not removed.', problemMessage(error)].join(' '));
      },
    });
  }
}
