import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  signal,
  untracked,
} from '@angular/core';
import { ReactiveFormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import {
  MatExpansionPanel,
  MatExpansionPanelDescription,
  MatExpansionPanelHeader,
  MatExpansionPanelTitle,
} from '@angular/material/expansion';
import { MatError, MatFormField, MatHint, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import { DEFAULT_REHEARSAL_SETTINGS, type RehearsalSettings } from '@emberline/shared';
import { CaseFileState } from '../../cases/case-file-state';
import { FieldError } from '../../core/field-error';
import { problemMessage } from '../../core/problem';
import { RehearsalCaution } from '../rehearsal-caution';
import { RehearsalSettingsApi } from './rehearsal-settings-api';
import {
  applyRehearsalFieldErrors,
  compactNumber,
  formValueOf,
  rehearsalFieldHints,
  rehearsalResolutions,
  rehearsalSettingsForm,
  rehearsalSettingsOf,
  resolutionLabel,
  settingLines,
} from './rehearsal-settings-form';

/**
 * The case's insertion-rehearsal settings in the Plans section: what the next assessment's
 * rehearsal will assume (mesh, breathing, liver elasticity), whether those are the defaults or
 * the case's own, what each means and where the defaults come from. The presenting physician
 * changes them for the case or sends the case back to the defaults; everyone else reads them.
 * Assessments already made keep the settings they ran with (their snapshot).
 */
@Component({
  selector: 'em-rehearsal-settings-panel',
  imports: [
    ReactiveFormsModule,
    MatButton,
    MatError,
    MatExpansionPanel,
    MatExpansionPanelDescription,
    MatExpansionPanelHeader,
    MatExpansionPanelTitle,
    MatFormField,
    MatHint,
    MatIcon,
    MatInput,
    MatLabel,
    MatOption,
    MatSelect,
    FieldError,
    RehearsalCaution,
  ],
  templateUrl: './rehearsal-settings-panel.html',
  styleUrl: './rehearsal-settings-panel.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RehearsalSettingsPanel {
  private readonly state = inject(CaseFileState);
  private readonly api = inject(RehearsalSettingsApi);

  /** The settings in force; undefined until the case has been read. */
  protected readonly settings = computed<RehearsalSettings | undefined>(
    () => this.state.detail()?.rehearsal,
  );
  protected readonly isOwn = computed(() => this.state.detail()?.hasOwnRehearsalSettings ?? false);
  /** Only the presenting physician edits (the server refuses anyone else). */
  protected readonly canEdit = computed(() => this.state.detail()?.permissions.canEdit ?? false);
  protected readonly lines = computed(() => {
    const settings = this.settings();
    return settings ? settingLines(settings, DEFAULT_REHEARSAL_SETTINGS) : [];
  });
  /** "medium mesh, breathing 12 mm / 4 s, liver 6 kPa": the header's line while folded. */
  protected readonly summary = computed(() => {
    const settings = this.settings();
    if (!settings) return '';
    const { amplitudeMm, periodS } = settings.breathing;
    return (
      `${settings.resolution} mesh, breathing ${compactNumber(amplitudeMm)} mm / ` +
      `${compactNumber(periodS)} s, liver ${compactNumber(settings.material.youngsModulusPa / 1000)} kPa`
    );
  });

  protected readonly resolutions = rehearsalResolutions;
  protected readonly resolutionLabel = resolutionLabel;
  protected readonly hints = rehearsalFieldHints;
  protected readonly form = rehearsalSettingsForm(DEFAULT_REHEARSAL_SETTINGS);
  protected readonly isSaving = signal(false);
  protected readonly errorText = signal('');
  protected readonly savedText = signal('');

  constructor() {
    // Follow the case as it is read or changed elsewhere, but never over unsaved typing.
    effect(() => {
      const settings = this.settings();
      if (settings) untracked(() => this.fillFrom(settings, { overEdits: false }));
    });
  }

  protected save(): void {
    this.savedText.set('');
    const settings = this.form.valid ? rehearsalSettingsOf(this.form) : null;
    if (!settings) {
      this.form.markAllAsTouched();
      this.errorText.set('Not saved: correct the fields marked first.');
      return;
    }
    this.send(
      settings,
      'Saved for this case. The next assessment requested rehearses with these settings.',
    );
  }

  protected resetToDefaults(): void {
    this.savedText.set('');
    this.send(null, 'The case uses the defaults again, from the next assessment requested.');
  }

  protected discard(): void {
    const settings = this.settings();
    if (settings) this.fillFrom(settings, { overEdits: true });
    this.errorText.set('');
    this.savedText.set('');
  }

  private send(rehearsal: RehearsalSettings | null, doneText: string): void {
    const caseId = this.state.caseId();
    if (!caseId) return;
    this.isSaving.set(true);
    this.errorText.set('');
    this.api.save(caseId, rehearsal).subscribe({
      next: (detail) => {
        this.isSaving.set(false);
        this.state.replace(detail);
        this.fillFrom(detail.rehearsal, { overEdits: true });
        this.savedText.set(doneText);
      },
      error: (error: unknown) => {
        this.isSaving.set(false);
        // What was typed stays in the fields; the server's reasons go on the fields they concern.
        const unmatched = rehearsal ? applyRehearsalFieldErrors(this.form, error) : [];
        const lead = rehearsal ? 'Not saved.' : 'The defaults were not restored.';
        this.errorText.set([lead, problemMessage(error), ...unmatched].join(' '));
      },
    });
  }

  private fillFrom(settings: RehearsalSettings, options: { overEdits: boolean }): void {
    if (this.form.dirty && !options.overEdits) return;
    this.form.reset(formValueOf(settings));
  }
}
