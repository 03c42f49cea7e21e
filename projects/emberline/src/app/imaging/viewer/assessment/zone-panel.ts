import { DatePipe, DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatDialog } from '@angular/material/dialog';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatRadioButton, MatRadioGroup } from '@angular/material/radio';
import type { ZoneModel } from '@emberline/shared';
import { ClinicalCaution } from '../../../core/clinical-caution';
import { RehearsalCaution } from '../../../plans/rehearsal-caution';
import { openRehearsalReplay } from '../rehearsal/rehearsal-replay-dialog';
import { formatMm } from './margin-colours';
import { ZoneOverlay } from './zone-overlay';
import { zoneName, zoneStyles } from './zone-styles';

const assessmentStates: Record<string, string> = {
  queued: 'is queued',
  running: 'is under way',
  failed: 'failed',
};

/**
 * The side panel of the assessed zones of the plan on screen: which zones show (the primary
 * model's first), the margin colouring of the tumour surfaces in 3D and the zone model it is
 * measured against, each tumour's minimal margin and share of surface under the target, and
 * the clinical caution; where the assessment rehearsed the insertion, a button per applicator
 * opens its 3D replay (`../rehearsal/`), or the engine's note says why it did not.
 */
@Component({
  selector: 'em-zone-panel',
  imports: [
    DatePipe,
    DecimalPipe,
    MatButton,
    MatCheckbox,
    MatProgressBar,
    MatRadioButton,
    MatRadioGroup,
    ClinicalCaution,
    RehearsalCaution,
  ],
  template: `
    <h3 id="zone-panel-title">Assessed zones</h3>
    @switch (overlay.phase()) {
      @case ('loading') {
        <p class="em-note">Reading the plan's assessment…</p>
        <mat-progress-bar mode="indeterminate" aria-label="Reading the assessment" />
      }
      @case ('failed') {
        <p class="em-error-text" role="alert">
          The assessed zones could not be read. {{ overlay.problem() }}
        </p>
        <button mat-stroked-button type="button" (click)="overlay.reload()">Try again</button>
      }
      @case ('unassessed') {
        <p class="em-note">
          This plan has no finished assessment yet{{ newerNote() ? ': ' + newerNote() : '.' }}
          Request one in the Plans section of the case.
        </p>
        <button mat-stroked-button type="button" (click)="overlay.reload()">Read again</button>
      }
      @case ('ready') {
        @if (overlay.assessment(); as assessment) {
          <p class="em-muted">
            Assessment of {{ assessment.updatedAt | date: 'medium' }}
            @if (newerNote()) {
              ; the newest {{ newerNote() }}
            }
          </p>
        }
        <ul class="zones" aria-labelledby="zone-panel-title">
          @for (zone of zoneRows(); track zone.model) {
            <li>
              <mat-checkbox
                [checked]="zone.isShown"
                [attr.data-zone-toggle]="zone.model"
                (change)="overlay.setZoneShown(zone.model, $event.checked)"
              >
                <svg class="sample" width="28" height="12" aria-hidden="true">
                  <line
                    x1="1"
                    y1="6"
                    x2="27"
                    y2="6"
                    [attr.stroke]="zone.colour"
                    [attr.stroke-dasharray]="zone.dash"
                  />
                </svg>
                {{ zone.label }}
                @if (zone.volumeMl !== null) {
                  <span class="em-muted">· {{ zone.volumeMl | number: '1.1-1' }} mL</span>
                }
                @if (zone.isPrimary) {
                  <span class="em-muted">· used for the verdict</span>
                }
              </mat-checkbox>
              <span class="pattern em-muted">{{ zone.pattern }}</span>
            </li>
          } @empty {
            <li class="em-note">The assessment holds no zone to draw.</li>
          }
        </ul>

        <h4 id="margin-title">Local margin on the tumour surface</h4>
        @if (overlay.marginModels().length) {
          <mat-checkbox
            data-margin-toggle
            [checked]="overlay.isMarginShown()"
            (change)="overlay.isMarginShown.set($event.checked)"
          >
            Colour the tumours by local margin in 3D
          </mat-checkbox>
          @if (overlay.marginModels().length > 1) {
            <mat-radio-group
              class="models"
              aria-label="Margins measured against"
              [value]="overlay.marginModel()"
              (change)="setMarginModel($event.value)"
            >
              <span class="em-muted">Measured against</span>
              @for (model of overlay.marginModels(); track model) {
                <mat-radio-button [value]="model">{{ styles[model].label }}</mat-radio-button>
              }
            </mat-radio-group>
          } @else {
            <p class="em-muted">Measured against the {{ zoneName(overlay.marginModel()) }}.</p>
          }
          @if (overlay.target(); as target) {
            <p class="em-muted" data-margin-target>
              Margin target {{ format(target.mm) }} mm ·
              {{
                target.source === 'verdict'
                  ? 'as the verdict used it'
                  : 'the default safety profile’s now (the verdict names none)'
              }}
            </p>
          } @else if (overlay.targetProblem()) {
            <p class="em-error-text" role="alert">
              The margin target could not be read, so the tumours are not coloured.
              {{ overlay.targetProblem() }}
            </p>
          }
        } @else {
          <p class="em-note">The assessment holds no margin samples.</p>
        }
        @if (overlay.tumourRows().length) {
          <table class="tumours" aria-labelledby="margin-title">
            <caption class="em-muted">
              Against the
              {{
                zoneName(overlay.marginModel())
              }}
            </caption>
            <thead>
              <tr>
                <th scope="col">Tumour</th>
                <th scope="col" class="number">Minimal margin</th>
                <th scope="col" class="number">Surface under target</th>
              </tr>
            </thead>
            <tbody>
              @for (row of overlay.tumourRows(); track row.structureId) {
                <tr [attr.data-tumour]="row.structureId">
                  <th scope="row">{{ row.name }}</th>
                  <td class="number" [class.em-error-text]="row.minimalMarginMm < 0">
                    {{ format(row.minimalMarginMm) }} mm
                  </td>
                  <td class="number">{{ row.surfaceBelowTargetPercent | number: '1.0-1' }} %</td>
                </tr>
              }
            </tbody>
          </table>
        }
        <p class="em-note">
          Zones and margins are those of this assessment: they do not follow later changes to the
          plan. Surfaces are smoothed for display; the figures are the engine's.
        </p>
        @if (overlay.assessment(); as assessment) {
          @if (assessment.result?.rehearsal?.length || assessment.result?.rehearsalNote) {
            <h4 id="rehearsal-title">Insertion rehearsal</h4>
            @if (assessment.result?.rehearsal?.length) {
              <div class="rehearsals" role="group" aria-labelledby="rehearsal-title">
                @for (entry of assessment.result?.rehearsal ?? []; track entry.applicatorIndex) {
                  <button
                    mat-stroked-button
                    type="button"
                    data-testid="rehearsal-open-replay"
                    (click)="openRehearsal(assessment.id, entry.applicatorIndex)"
                  >
                    Replay applicator {{ entry.applicatorIndex + 1 }} in 3D
                  </button>
                }
              </div>
              <em-rehearsal-caution />
            } @else {
              <p class="em-note">{{ assessment.result?.rehearsalNote }}</p>
            }
          }
        }
      }
    }
    @if (overlay.phase() !== 'idle') {
      <em-clinical-caution />
    }
  `,
  styles: `
    :host {
      display: flex;
      flex-direction: column;
      gap: 6px;
    }
    h3,
    h4 {
      margin: 0;
    }
    h4 {
      margin-top: 6px;
      font: var(--mat-sys-title-small);
    }
    p {
      margin: 0;
    }
    .zones {
      list-style: none;
      margin: 0;
      padding: 0;
    }
    .pattern {
      display: block;
      margin: 0 0 4px 40px;
      font: var(--mat-sys-body-small);
    }
    .sample {
      margin-right: 4px;
      vertical-align: -1px;
      background: #15202a;
      border-radius: 2px;

      line {
        stroke-width: 2.5;
      }
    }
    .models {
      display: flex;
      flex-wrap: wrap;
      align-items: center;
      gap: 0 8px;
    }
    .tumours {
      width: 100%;
      border-collapse: collapse;
      font: var(--mat-sys-body-small);

      caption {
        text-align: left;
      }

      th,
      td {
        padding: 3px 4px;
        border-bottom: 1px solid var(--mat-sys-outline-variant);
        text-align: left;
      }

      .number {
        text-align: right;
        white-space: nowrap;
      }
    }
    .rehearsals {
      display: flex;
      flex-wrap: wrap;
      gap: 6px;
    }
    .em-note,
    .em-muted {
      font: var(--mat-sys-body-small);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ZonePanel {
  protected readonly overlay = inject(ZoneOverlay);
  private readonly dialog = inject(MatDialog);
  protected readonly styles = zoneStyles;
  protected readonly zoneName = zoneName;
  protected readonly format = formatMm;

  protected readonly zoneRows = computed(() => {
    const shown = this.overlay.shownZones();
    const primary = this.overlay.primaryModel();
    const volumes = this.overlay.zoneVolumesMl();
    return this.overlay.zones().map((zone) => ({
      model: zone.model,
      ...zoneStyles[zone.model],
      isShown: shown.has(zone.model),
      isPrimary: zone.model === primary,
      volumeMl: volumes.get(zone.model) ?? null,
    }));
  });

  /** What became of a newer assessment than the one drawn, in words. */
  protected readonly newerNote = computed(() => {
    const newer = this.overlay.newer();
    return newer ? `assessment ${assessmentStates[newer.status] ?? newer.status}` : '';
  });

  /** The 3D replay of the applicator's insertion rehearsal of the assessment drawn. */
  protected openRehearsal(assessmentId: string, applicatorIndex: number): void {
    openRehearsalReplay(this.dialog, {
      assessmentId,
      applicatorIndex,
      planName: this.overlay.plan()?.name,
    });
  }

  protected setMarginModel(model: ZoneModel): void {
    this.overlay.marginModel.set(model);
  }
}
