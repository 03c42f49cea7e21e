import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { ReactiveFormsModule } from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import { MatError, MatFormField, MatHint, MatLabel, MatSuffix } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import {
  structureKindLabels,
  structureKinds,
  type SafetyProfileBody,
  type SafetyProfileView,
  type StructureKind,
} from '@emberline/shared';
import { map } from 'rxjs';
import { FieldError } from '../core/field-error';
import { AdminApi } from './admin-api';
import { profileSaveRefusal } from './profile-save-refusal';
import { ProfileDialogShell } from './profile-dialog-shell';
import {
  safetyProfileBody,
  safetyProfileForm,
  structureRuleForm,
  thresholdDefinitions,
} from './safety-profile-form';

export interface SafetyProfileDialogData {
  /** The profile to edit, or null for a new one. */
  profile: SafetyProfileView | null;
  /** For a new profile: the profile whose values it starts from (the default), if any. */
  startFrom: SafetyProfileView | null;
}

/**
 * Creates or edits a safety profile: a rule per structure kind, and the global thresholds, each
 * with where its value comes from. Saving sends every field (POST, or PATCH for an edit); an edit
 * of a version that assessments used becomes the profile's next version.
 */
@Component({
  selector: 'em-safety-profile-dialog',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatHint,
    MatError,
    MatSuffix,
    MatInput,
    MatSelect,
    MatOption,
    MatCheckbox,
    MatButton,
    MatIconButton,
    MatIcon,
    FieldError,
    ProfileDialogShell,
  ],
  templateUrl: './safety-profile-dialog.html',
  styleUrl: './safety-profile-dialog.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SafetyProfileDialog {
  private readonly api = inject(AdminApi);
  private readonly dialogRef =
    inject<MatDialogRef<SafetyProfileDialog, SafetyProfileView>>(MatDialogRef);
  private readonly data = inject<SafetyProfileDialogData>(MAT_DIALOG_DATA);
  protected readonly profile = this.data.profile;
  protected readonly startFrom = this.profile ? null : this.data.startFrom;

  protected readonly kindOptions = structureKinds.map((kind) => ({
    kind,
    label: structureKindLabels[kind],
  }));
  protected readonly kindLabels = structureKindLabels;
  protected readonly thresholds = thresholdDefinitions;
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');

  protected readonly form = safetyProfileForm(
    this.profile ?? (this.startFrom ? { ...this.startFrom, name: '', isDefault: false } : null),
  );
  protected readonly rules = this.form.controls.structureRules;
  private readonly ruleKinds = toSignal(
    this.rules.valueChanges.pipe(map(() => this.rules.getRawValue().map((rule) => rule.kind))),
    { initialValue: this.rules.getRawValue().map((rule) => rule.kind) },
  );
  /** Kinds that have no rule yet, offered first when a rule is added. */
  protected readonly unusedKinds = computed(() => {
    const used = new Set(this.ruleKinds());
    return structureKinds.filter((kind) => !used.has(kind));
  });

  constructor() {
    // The default cannot simply be unmarked: another profile must become the default instead.
    if (this.profile?.isDefault) this.form.controls.isDefault.disable();
  }

  protected isKindTakenElsewhere(kind: StructureKind, index: number): boolean {
    return this.ruleKinds().some((other, otherIndex) => other === kind && otherIndex !== index);
  }

  protected ruleMessage(index: number): string {
    const duplicates = this.rules.errors?.['duplicateKinds'] as Record<number, string> | undefined;
    const server: unknown = this.rules.at(index).errors?.['server'];
    return duplicates?.[index] ?? (typeof server === 'string' ? server : '');
  }

  protected addRule(): void {
    const kind = this.unusedKinds()[0];
    if (!kind) return;
    this.rules.push(structureRuleForm({ kind, isCritical: false }));
    this.rules.markAsDirty();
  }

  protected removeRule(index: number): void {
    this.rules.removeAt(index);
    this.rules.markAsDirty();
  }

  protected save(): void {
    const fields = this.form.valid ? safetyProfileBody(this.form) : null;
    if (!fields) {
      this.form.markAllAsTouched();
      this.errorText.set('Some values are missing or not valid; see the marked fields.');
      return;
    }
    const isDefault = this.form.controls.isDefault.value;
    // `isDefault` is sent only to make this profile the default; left out, it stays as it is.
    const body: SafetyProfileBody =
      isDefault && !this.profile?.isDefault ? { ...fields, isDefault: true } : fields;
    this.isSaving.set(true);
    this.errorText.set('');
    const saving = this.profile
      ? this.api.updateSafetyProfile(this.profile.id, body)
      : this.api.createSafetyProfile(body);
    saving.subscribe({
      next: (saved) => this.dialogRef.close(saved),
      error: (error: unknown) => {
        this.isSaving.set(false);
        this.errorText.set(profileSaveRefusal(this.form, error, this.profile !== null));
      },
    });
  }
}
