import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatTableModule } from '@angular/material/table';
import {
  ablationModalityLabels,
  zoneTableSourceLabels,
  type ApplicatorProfileView,
} from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { AdminApi } from './admin-api';
import {
  ApplicatorProfileDialog,
  type ApplicatorProfileDialogData,
} from './applicator-profile-dialog';
import { ProfileListPage } from './profile-list-page';
import { profileSaveMessage } from './profile-save-message';
import { ProfileRowAction } from './profile-row-action';

/**
 * Applicator profiles: what each applicator is and the zone table plans draw from, with where
 * that table comes from. Profiles are never deleted; a retired one stays readable for the plans
 * that name it.
 */
@Component({
  selector: 'em-applicator-profiles',
  imports: [MatTableModule, TypedCellDef, MatButton, ProfileListPage, ProfileRowAction],
  templateUrl: './applicator-profiles.html',
  styleUrl: './applicator-profiles.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ApplicatorProfiles {
  private readonly api = inject(AdminApi);
  private readonly dialog = inject(MatDialog);

  protected readonly profiles = this.api.applicatorProfiles();
  /** The rows of the list, empty until it arrives (reading an errored resource would throw). */
  protected readonly rows = computed(() => (this.profiles.hasValue() ? this.profiles.value() : []));
  protected readonly modalityLabels = ablationModalityLabels;
  protected readonly sourceLabels = zoneTableSourceLabels;
  protected readonly busyId = signal<string | null>(null);
  protected readonly errorText = signal('');
  protected readonly statusText = signal('');
  protected readonly about = [
    'The demo profiles are invented values for trying Emberline; they describe no real ' +
      "applicator and no maker's data.",
    "A zone table for clinical use must be copied from the maker's published data for that " +
      'applicator and generator, or from measurements the team trusts, with its source named, ' +
      'and checked under your local protocols before any plan relies on the zones drawn from ' +
      'it. An edit of a table that assessments used makes a new version of the profile; those ' +
      'assessments keep the version they ran on.',
  ];

  protected openCreate(): void {
    this.open({ profile: null });
  }

  protected openEdit(profile: ApplicatorProfileView): void {
    this.open({ profile });
  }

  /** Retires a profile (new plans cannot choose it) or puts a retired one back in use. */
  protected toggleRetired(profile: ApplicatorProfileView): void {
    const isRetired = !profile.isRetired;
    this.busyId.set(profile.id);
    this.errorText.set('');
    this.statusText.set('');
    this.api.updateApplicatorProfile(profile.id, { isRetired }).subscribe({
      next: (saved) => {
        this.busyId.set(null);
        this.replace(saved);
        this.statusText.set(
          isRetired
            ? `${saved.name} is retired: new plans cannot choose it.`
            : `${saved.name} is back in use.`,
        );
      },
      error: (error: unknown) => {
        this.busyId.set(null);
        this.errorText.set(`${profile.name} was not changed: ${problemMessage(error)}`);
      },
    });
  }

  private open(data: ApplicatorProfileDialogData): void {
    this.dialog
      .open<ApplicatorProfileDialog, ApplicatorProfileDialogData, ApplicatorProfileView>(
        ApplicatorProfileDialog,
        { data, width: '920px', maxWidth: '95vw' },
      )
      .afterClosed()
      .subscribe((saved) => {
        if (!saved) return;
        this.errorText.set('');
        this.statusText.set(profileSaveMessage(saved, data.profile));
        this.profiles.reload();
      });
  }

  private replace(saved: ApplicatorProfileView): void {
    this.profiles.update((list) =>
      list?.map((profile) => (profile.id === saved.id ? saved : profile)),
    );
  }
}
