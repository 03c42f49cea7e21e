import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTabLink, MatTabNav, MatTabNavPanel } from '@angular/material/tabs';
import { Router, RouterLink, RouterLinkActive, RouterOutlet, type Data } from '@angular/router';
import { caseStatuses, primaryDiagnosisLabels } from '@emberline/shared';
import { ConfirmDialog, type ConfirmDialogData } from '../core/confirm-dialog';
import { problemMessage } from '../core/problem';
import { CaseApi } from './case-api';
import { CaseFileState } from './case-file-state';
import { CaseStatusBadge } from './case-status-badge';
import { AgendaPlacement } from '../meetings/agenda-placement';

/** The sections of a case file, in order (DEVELOPERS.md, "Screens"). */
export const caseFileSections: readonly { path: string; label: string }[] = [
  { path: 'summary', label: 'Summary' },
  { path: 'imaging', label: 'Imaging' },
  { path: 'plans', label: 'Plans' },
  { path: 'discussion', label: 'Discussion' },
  { path: 'decision', label: 'Decision' },
  { path: 'logistics', label: 'Logistics' },
];

/** The case file: its header and the navigation between its sections. */
@Component({
  selector: 'em-case-file',
  imports: [
    RouterOutlet,
    RouterLink,
    RouterLinkActive,
    MatTabNav,
    MatTabLink,
    MatTabNavPanel,
    MatProgressBar,
    MatButton,
    MatIcon,
    CaseStatusBadge,
    AgendaPlacement,
  ],
  providers: [CaseFileState],
  host: { '[class.is-workspace]': 'isWorkspace()' },
  templateUrl: './case-file.html',
  styleUrl: './case-file.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CaseFile {
  private readonly state = inject(CaseFileState);
  private readonly api = inject(CaseApi);
  private readonly dialog = inject(MatDialog);
  private readonly router = inject(Router);

  protected readonly sections = caseFileSections;
  protected readonly diagnosisLabels = primaryDiagnosisLabels;
  protected readonly resource = this.state.resource;
  protected readonly detail = this.state.detail;
  protected readonly isDeleting = signal(false);
  /**
   * The section shown is a workspace (route data `isWorkspace`, the viewer): the case file then
   * spans the window's width and hands the section all the height below its header.
   */
  protected readonly isWorkspace = signal(false);
  /** Decided or later: the record is frozen, corrected only by amendments to the decision. */
  protected readonly isDecided = computed(() => {
    const status = this.detail()?.status;
    return !!status && caseStatuses.indexOf(status) >= caseStatuses.indexOf('decided');
  });
  protected readonly loadError = computed(() => {
    const error = this.resource.error();
    if (!error) return '';
    if (error instanceof HttpErrorResponse && error.status === 404) {
      return 'This case does not exist, or it is not on one of your boards.';
    }
    return problemMessage(error);
  });

  protected sectionShown(data: Data): void {
    this.isWorkspace.set(data['isWorkspace'] === true);
  }

  protected confirmDelete(): void {
    const detail = this.detail();
    if (!detail) return;
    const data: ConfirmDialogData = {
      title: `Delete case ${detail.caseCode}?`,
      message:
        'The draft, its lesions and its laboratory values are deleted. This cannot be undone.',
      confirmLabel: 'Delete draft',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, boolean>(ConfirmDialog, { data })
      .afterClosed()
      .subscribe((isConfirmed) => {
        if (isConfirmed) this.delete(detail.id);
      });
  }

  private delete(caseId: string): void {
    this.isDeleting.set(true);
    this.api.remove(caseId).subscribe({
      next: () => void this.router.navigateByUrl('/cases'),
      error: () => this.isDeleting.set(false),
    });
  }
}
