import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import { ablationModalityLabels, type ApplicatorProfileView } from '@emberline/shared';
import { ClinicalCaution } from '../core/clinical-caution';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { AdminApi } from './admin-api';
import {
  ApplicatorProfilesDialog,
  type ApplicatorProfileDialogData,
} from './applicator-profiles-dialog';

/**
 * Applicator profiles: what each applicator is and the zone table plans draw from. Profiles are
 * never deleted; a retired one stays readable for the plans that name it.
 */
@Component({
  selector: 'em-applicator-profiles',
  imports: [MatTableModule, TypedCellDef, MatButton, MatIcon, MatProgressBar, ClinicalCaution],
  templateUrl: './applicator-profiles.html',
  styleUrl: './applicator-profiles.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ApplicatorProfiles {
  private readonly api = inject(AdminApi);
  private readonly dialog = inject(MatDialog);

  protected readonly profiles = this.api.applicatorProfiles();
  protected readonly columns = [
    'name',
    'modality',
    'gauge',
    'lengths',
    'zoneRows',
    'status',
    'actions',
  ];
  protected readonly modalityLabels = ablationModalityLabels;
  protected readonly busyId = signal<string | null>(null);
  protected readonly errorText = signal('');
  protected readonly statusText = signal('');
  protected readonly loadError = computed(() =>
    this.profiles.error() ? problemMessage(this.profiles.error()) : '',
  );

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
      .open<ApplicatorProfilesDialog, ApplicatorProfileDialogData, ApplicatorProfileView>(
        ApplicatorProfilesDialog,
        { data, width: '920px', maxWidth: '95vw' },
      )
      .afterClosed()
      .subscribe((saved) => {
        if (!saved) return;
        this.statusText.set(data.profile ? `${saved.name} saved.` : `${saved.name} created.`);
        this.profiles.reload();
      });
  }

  private replace(saved: ApplicatorProfileView): void {
    this.profiles.update((list) =>
      list?.map((profile) => (profile.id === saved.id ? saved : profile)),
    );
  }
}
