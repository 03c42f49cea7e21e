import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import type { SafetyProfileBody, SafetyProfileView } from '@emberline/shared';
import { ClinicalCaution } from '../core/clinical-caution';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { AdminApi } from './admin-api';
import { SafetyProfilesDialog, type SafetyProfileDialogData } from './safety-profiles-dialog';

/**
 * Safety profiles: the thresholds that turn an assessment's figures into a verdict. One is the
 * default for new assessments; every threshold says where its value comes from.
 */
@Component({
  selector: 'em-safety-profiles',
  imports: [
    DatePipe,
    MatTableModule,
    TypedCellDef,
    MatButton,
    MatIcon,
    MatProgressBar,
    ClinicalCaution,
  ],
  templateUrl: './safety-profiles.html',
  styleUrl: './safety-profiles.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SafetyProfiles {
  private readonly api = inject(AdminApi);
  private readonly dialog = inject(MatDialog);

  protected readonly profiles = this.api.safetyProfiles();
  protected readonly columns = ['name', 'rules', 'margin', 'heatSink', 'updatedAt', 'actions'];
  protected readonly busyId = signal<string | null>(null);
  protected readonly errorText = signal('');
  protected readonly statusText = signal('');
  protected readonly loadError = computed(() =>
    this.profiles.error() ? problemMessage(this.profiles.error()) : '',
  );
  private readonly defaultProfile = computed(() =>
    this.profiles.hasValue() ? (this.profiles.value().find((p) => p.isDefault) ?? null) : null,
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
    this.api.replaceSafetyProfile(profile.id, { ...bodyOf(profile), isDefault: true }).subscribe({
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
      .open<SafetyProfilesDialog, SafetyProfileDialogData, SafetyProfileView>(
        SafetyProfilesDialog,
        { data, width: '960px', maxWidth: '95vw' },
      )
      .afterClosed()
      .subscribe((saved) => {
        if (!saved) return;
        this.statusText.set(data.profile ? `${saved.name} saved.` : `${saved.name} created.`);
        this.profiles.reload();
      });
  }
}

/** The profile as the PUT body takes it (the body schema is strict: no id, no timestamps). */
function bodyOf(profile: SafetyProfileView): SafetyProfileBody {
  return {
    name: profile.name,
    structureRules: profile.structureRules,
    marginTargetMm: profile.marginTargetMm,
    marginTargetSource: profile.marginTargetSource,
    marginMinimumMm: profile.marginMinimumMm,
    marginMinimumSource: profile.marginMinimumSource,
    heatSinkDiameterMm: profile.heatSinkDiameterMm,
    heatSinkDistanceMm: profile.heatSinkDistanceMm,
    heatSinkKinds: profile.heatSinkKinds,
    heatSinkSource: profile.heatSinkSource,
    maximumAngulationDeg: profile.maximumAngulationDeg,
    angulationSource: profile.angulationSource,
    minimumParenchymaBeforeTumourMm: profile.minimumParenchymaBeforeTumourMm,
    parenchymaSource: profile.parenchymaSource,
    maximumCapsuleCrossings: profile.maximumCapsuleCrossings,
    capsuleSource: profile.capsuleSource,
  };
}
