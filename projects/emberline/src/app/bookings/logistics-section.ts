import { DatePipe } from '@angular/common';
import { HttpErrorResponse } from '@angular/common/http';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  effect,
  inject,
  signal,
  untracked,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import {
  bookingUrgencyLabels,
  caseStatusLabels,
  complicationGradeLabels,
  treatmentLabels,
  type BookingView,
  type CaseLogisticsView,
} from '@emberline/shared';
import { CaseFileState } from '../cases/case-file-state';
import { AuthSession } from '../core/auth-session';
import { problemMessage } from '../core/problem';
import { BookingApi } from './booking-api';
import { BookingCard } from './booking-card';
import { BookingDialog, type BookingDialogData, type BookingDialogMode } from './booking-dialog';
import { ChecklistPanel } from './checklist-panel';
import { complicationClassification } from './complication-grades';
import { ReasonDialog, type ReasonDialogData } from './reason-dialog';
import { TreatmentDialog, type TreatmentDialogData } from './treatment-dialog';

/**
 * The case file's Logistics section (`/cases/:id/logistics`): the procedure's booking with its
 * checklist, history and notifications; the treatment record; the follow-up imaging. The nurse
 * coordinator books, rebooks, cancels and confirms; the operator ticks the checklist and marks
 * the procedure done; everyone else who may see the case reads. Every change reads the section
 * again from the server. `?book=procedure` or `?book=follow-up` (the queue's "Book") opens the
 * booking dialog once the section has loaded.
 */
@Component({
  selector: 'em-logistics-section',
  imports: [DatePipe, RouterLink, MatButton, MatIcon, MatProgressBar, BookingCard, ChecklistPanel],
  templateUrl: './logistics-section.html',
  styleUrl: './logistics-section.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LogisticsSection {
  private readonly state = inject(CaseFileState);
  private readonly api = inject(BookingApi);
  private readonly dialog = inject(MatDialog);
  private readonly route = inject(ActivatedRoute);
  private readonly router = inject(Router);
  private readonly session = inject(AuthSession);

  protected readonly outcomeLabels = treatmentLabels;
  protected readonly urgencyLabels = bookingUrgencyLabels;
  protected readonly statusLabels = caseStatusLabels;
  protected readonly gradeLabels = complicationGradeLabels;
  protected readonly classification = complicationClassification;
  protected readonly resource = this.api.logistics(this.state.caseId);
  protected readonly view = computed<CaseLogisticsView | null>(() =>
    this.resource.hasValue() ? (this.resource.value() ?? null) : null,
  );
  protected readonly loadError = computed(() => {
    const error = this.resource.error();
    if (!error) return '';
    if (error instanceof HttpErrorResponse && error.status === 404) {
      return 'This case does not exist, or it is not on one of your boards.';
    }
    return problemMessage(error);
  });
  protected readonly caseCode = computed(() => this.state.detail()?.caseCode ?? '');
  /** A live procedure booking (booked or confirmed): what the checklist and actions act on. */
  protected readonly liveProcedure = computed(() => {
    const procedure = this.view()?.procedure;
    return procedure && (procedure.state === 'booked' || procedure.state === 'confirmed')
      ? procedure
      : null;
  });
  protected readonly mayBookProcedure = computed(() => {
    const view = this.view();
    return (
      !!view?.permissions.canBook && view.isBookable && !this.liveProcedure() && !view.treatment
    );
  });
  /**
   * A nurse coordinator of the case's board. `permissions.canBook` speaks of the procedure only;
   * the follow-up imaging is the coordinator's once the treatment is recorded (the server checks
   * again).
   */
  protected readonly isCoordinator = computed(() => {
    const user = this.session.user();
    const boardId = this.state.detail()?.board.id;
    return (
      !!user &&
      !!boardId &&
      user.roles.includes('nurse-coordinator') &&
      user.boards.some((membership) => membership.boardId === boardId)
    );
  });
  protected readonly mayBookFollowUp = computed(() => {
    const view = this.view();
    const followUp = view?.followUp;
    return (
      this.isCoordinator() && !!view?.treatment && (!followUp || followUp.state === 'cancelled')
    );
  });
  /** Someone who may only read: no booking, no checklist, no treatment to record. */
  protected readonly isReader = computed(() => {
    const view = this.view();
    return (
      !!view &&
      !this.isCoordinator() &&
      !view.permissions.canRecordTreatment &&
      !view.procedure?.permissions.canCheck
    );
  });
  protected readonly statusText = signal('');
  /** The queue's "Book" asked for a dialog: opened once, when the section has loaded. */
  private pendingBook = this.route.snapshot.queryParamMap.get('book');

  constructor() {
    effect(() => {
      const view = this.view();
      if (!view || !this.pendingBook) return;
      const wanted = this.pendingBook;
      this.pendingBook = null;
      untracked(() => {
        void this.router.navigate([], {
          relativeTo: this.route,
          queryParams: { book: null },
          replaceUrl: true,
        });
        if (wanted === 'procedure' && this.mayBookProcedure()) this.openBooking('procedure');
        if (wanted === 'follow-up' && this.mayBookFollowUp()) this.openBooking('follow-up');
      });
    });
  }

  protected openBooking(mode: BookingDialogMode): void {
    const view = this.view();
    if (!view) return;
    const data: BookingDialogData = {
      mode,
      caseId: view.caseId,
      caseCode: this.caseCode(),
      operators: view.operators,
      current: mode === 'rebook' ? view.procedure : null,
      proposedDate: view.treatment?.followUp.proposedDate ?? null,
    };
    this.dialog
      .open<BookingDialog, BookingDialogData, boolean>(BookingDialog, {
        data,
        width: '640px',
        maxWidth: '95vw',
      })
      .afterClosed()
      .subscribe((isSaved) => {
        if (!isSaved) return;
        this.statusText.set(
          mode === 'rebook'
            ? 'The booking is changed; the care team is e-mailed the change.'
            : 'Booked; the care team is e-mailed an invitation.',
        );
        this.reloadAll();
      });
  }

  protected openCancel(booking: BookingView): void {
    const view = this.view();
    if (!view) return;
    const isFollowUp = booking.kind === 'follow-up-imaging';
    const what = isFollowUp ? 'follow-up imaging' : 'procedure';
    const data: ReasonDialogData = {
      title: `Cancel the ${what}?`,
      message:
        `The ${what} booked for ${new Date(booking.startsAt).toLocaleString()} in ` +
        `${booking.room} is cancelled, and the care team is e-mailed a cancellation of its ` +
        'calendar invitation. The case goes back to the queue.',
      reasonLabel: 'Reason for the cancellation',
      confirmLabel: `Cancel the ${what}`,
      send: (reason) =>
        isFollowUp
          ? this.api.cancelFollowUp(view.caseId, { reason })
          : this.api.cancel(view.caseId, { reason }),
    };
    this.dialog
      .open<ReasonDialog, ReasonDialogData, boolean>(ReasonDialog, { data, width: '520px' })
      .afterClosed()
      .subscribe((isDone) => {
        if (!isDone) return;
        this.statusText.set('Cancelled; the care team is e-mailed the cancellation.');
        this.reloadAll();
      });
  }

  protected openTreatment(booking: BookingView): void {
    const view = this.view();
    if (!view) return;
    const data: TreatmentDialogData = {
      caseId: view.caseId,
      caseCode: this.caseCode(),
      startsAt: booking.startsAt,
      applicators: booking.applicators,
    };
    this.dialog
      .open<TreatmentDialog, TreatmentDialogData, boolean>(TreatmentDialog, {
        data,
        width: '640px',
        maxWidth: '95vw',
      })
      .afterClosed()
      .subscribe((isDone) => {
        if (!isDone) return;
        this.statusText.set('The procedure is recorded; the follow-up imaging is proposed.');
        this.reloadAll();
      });
  }

  protected changed(): void {
    this.reloadAll();
  }

  /** The logistics, and the case file's header: a booking or treatment moves the case's status. */
  private reloadAll(): void {
    this.resource.reload();
    this.state.resource.reload();
  }
}
