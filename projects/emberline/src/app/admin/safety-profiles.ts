import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatTableModule } from '@angular/material/table';
import type { SafetyProfileView } from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { AdminApi } from './admin-api';
import { ProfileListPage } from './profile-list-page';
import { ProfileRowAction } from './profile-row-action';
import { profileSaveMessage } from './profile-save-message';
import { SafetyProfileDialog, type SafetyProfileDialogData } from './safety-profile-dialog';

/**
 * Safety profiles: the thresholds that turn an assessment's figures into a verdict. One is the
 * default for new assessments; every threshold says where its value comes from.
 */
@Component({
  selector: 'em-safety-profiles',
  imports: [DatePipe, MatTableModule, TypedCellDef, MatButton, ProfileListPage, ProfileRowAction],
  templateUrl: './safety-profiles.html',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SafetyProfiles {
  private readonly api = inject(AdminApi);
  private readonly dialog = inject(MatDialog);

  protected readonly profiles = this.api.safetyProfiles();
  /** The rows of the list, empty until it arrives (reading an errored resource would throw). */
  protected readonly rows = computed(() => (this.profiles.hasValue() ? this.profiles.value() : []));
  protected readonly busyId = signal<string | null>(null);
  protected readonly errorText = signal('');
  protected readonly statusText = signal('');
  protected readonly about = [
    "A safety profile turns an assessment's measurements into a verdict. Every threshold names " +
      'its source, so the board can weigh it; the verdict lists each rule it applied.',
    'The demo profile holds example values for trying Emberline. Set the values your team uses ' +
      'from local protocols and the literature it follows, and name that source beside each ' +
      'one. An edit of thresholds that assessments used makes a new version of the profile; ' +
      'those assessments keep the version they ran on.',
  ];
  private readonly defaultProfile = computed(
    () => this.rows().find((profile) => profile.isDefault) ?? null,
  );

  protected rulesText(profile: SafetyProfileView): string {
    const count = profile.structureRules.length;
    const critical = profile.structureRules.filter((rule) => rule.isCritical).length;
    return `${count} ${count === 1 ? 'kind' : 'kinds'}, ${critical} critical`;
  }

  protected openCreate(): void {
    this.open({ profile: null, startFrom: this.defaultProfile() });
  }

  protected openEdit(profile: SafetyProfileView): void {
    this.open({ profile, startFrom: null });
  }

  /** Makes the profile the default for new assessments; the previous default stops being one. */
  protected makeDefault(profile: SafetyProfileView): void {
    this.busyId.set(profile.id);
    this.errorText.set('');
    this.statusText.set('');
    this.api.updateSafetyProfile(profile.id, { isDefault: true }).subscribe({
      next: (saved) => {
        this.busyId.set(null);
        this.statusText.set(`${saved.name} is now the default for new assessments.`);
        this.profiles.reload();
      },
      error: (error: unknown) => {
        this.busyId.set(null);
        this.errorText.set(`${profile.name} was not made the default: ${problemMessage(error)}`);
      },
    });
  }

  private open(data: SafetyProfileDialogData): void {
    this.dialog
      .open<SafetyProfileDialog, SafetyProfileDialogData, SafetyProfileView>(SafetyProfileDialog, {
        data,
        width: '960px',
        maxWidth: '95vw',
      })
      .afterClosed()
      .subscribe((saved) => {
        if (!saved) return;
        this.errorText.set('');
        this.statusText.set(profileSaveMessage(saved, data.profile));
        this.profiles.reload();
      });
  }
}
