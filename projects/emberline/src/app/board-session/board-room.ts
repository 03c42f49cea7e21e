import {
  ChangeDetectionStrategy,
  Component,
  DestroyRef,
  computed,
  effect,
  inject,
  input,
  output,
  signal,
  untracked,
  viewChild,
} from '@angular/core';
import { HttpErrorResponse } from '@angular/common/http';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { from, map } from 'rxjs';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { Router, RouterLink } from '@angular/router';
import {
  primaryDiagnosisLabels,
  specialtyLabels,
  type AgendaItemView,
  type CastVote,
  type CommentView,
  type MeetingView,
  type PostComment,
  type RecordDecision,
  type TallyView,
  type ViewState,
} from '@emberline/shared';
import { AuthSession } from '../core/auth-session';
import { ClinicalCaution } from '../core/clinical-caution';
import { ConfirmDialog, type ConfirmDialogData } from '../core/confirm-dialog';
import { problemMessage } from '../core/problem';
import { PlanApi } from '../plans/plan-api';
import { DecisionRecordForm } from '../decisions/decision-record-form';
import { PlanComparison } from '../plans/plan-comparison';
import { SeriesApi } from '../imaging/series-api';
import { ViewerPage, type SharedView } from '../imaging/viewer/viewer-page';
import { BoardSessionApi } from './board-session-api';
import { CommentThread } from './comment-thread';
import { BoardSessionSocket } from './session-socket';
import { VotePanel } from './vote-panel';

const emptyView: ViewState = {
  agendaItemId: null,
  seriesId: null,
  slice: null,
  window: null,
  camera: null,
};

/**
 * The live board session of a meeting: the agenda rail with who is here and whether quorum is
 * met, the shared review of the current case led by one member (the others follow, may look
 * around and rejoin the lead), its plan comparison, the live tally with each member's own
 * positions, and the comments. Every action goes through the session socket and is authorised
 * by the server; the page only reflects what the server says.
 */
@Component({
  selector: 'em-board-room',
  imports: [
    RouterLink,
    MatButton,
    MatIcon,
    ClinicalCaution,
    CommentThread,
    PlanComparison,
    VotePanel,
    ViewerPage,
    DecisionRecordForm,
  ],
  providers: [BoardSessionSocket],
  template: `
    <div class="room" [attr.data-connection]="socket.connection()">
      <aside class="rail" aria-label="Agenda and attendance">
        <p class="connection" role="status">
          <mat-icon aria-hidden="true">{{
            socket.connection() === 'connected' ? 'wifi' : 'wifi_off'
          }}</mat-icon>
          {{ connectionText() }}
        </p>
        @if (socket.problem()) {
          <p class="em-error-text" role="alert">{{ socket.problem() }}</p>
        }
        <h2 id="rail-agenda">Agenda</h2>
        <ol class="agenda" aria-labelledby="rail-agenda">
          @for (item of meeting().agenda; track item.id) {
            <li>
              <button
                type="button"
                class="agenda-item"
                [class.current]="item.id === currentItem()?.id"
                [attr.aria-current]="item.id === currentItem()?.id ? 'true' : null"
                (click)="choose(item)"
              >
                <span class="position">{{ item.position }}</span>
                <span>
                  <strong>{{ item.caseCode }}</strong>
                  <span class="em-muted"> · {{ diagnosisLabels[item.primaryDiagnosis] }}</span>
                  @if (item.isClosed) {
                    <span class="closed"> · closed</span>
                  }
                </span>
              </button>
            </li>
          }
        </ol>
        <h2 id="rail-people">In the room</h2>
        @let presence = socket.presence();
        @if (presence) {
          <p class="quorum" [class.met]="presence.quorum.isMet" data-testid="quorum">
            <mat-icon aria-hidden="true">{{
              presence.quorum.isMet ? 'check_circle' : 'error_outline'
            }}</mat-icon>
            Quorum {{ presence.quorum.explanation }}
          </p>
          <ul class="people" aria-labelledby="rail-people">
            @for (person of presence.members; track person.userId) {
              <li>
                <span>
                  {{ person.displayName }}
                  @if (person.userId === presence.leadUserId) {
                    <span class="lead-mark">leads</span>
                  }
                </span>
                <span class="em-muted"
                  >{{ specialtyLabels[person.specialty]
                  }}{{ person.isInRoom ? '' : ' · by vote' }}</span
                >
                @if (mayHandOver() && person.isInRoom && person.userId !== presence.leadUserId) {
                  <button
                    type="button"
                    class="hand-over"
                    (click)="handOver(person.userId)"
                    [attr.aria-label]="
                      person.userId === myId()
                        ? 'Take the lead yourself'
                        : 'Hand the lead to ' + person.displayName
                    "
                  >
                    {{ person.userId === myId() ? 'Take the lead' : 'Hand the lead' }}
                  </button>
                }
              </li>
            }
          </ul>
        }
        @if (permissions()?.canClose) {
          <button mat-stroked-button type="button" class="close" (click)="closeMeeting()">
            Close the meeting
          </button>
          @if (closeError()) {
            <p class="em-error-text" role="alert">{{ closeError() }}</p>
          }
        }
      </aside>

      <section class="review" aria-labelledby="review-title">
        @let item = currentItem();
        <header class="review-head">
          <h2 id="review-title">
            @if (item) {
              {{ item.caseCode }} · presented by {{ item.presenterName }}
            } @else {
              No case in review
            }
          </h2>
          <span class="follow" role="status" data-testid="follow-state">
            @if (isLead()) {
              You lead the review
            } @else if (isFollowing() && !leadName()) {
              The lead has not joined yet
            } @else if (isFollowing()) {
              Following {{ leadName() }}
            } @else {
              Looking around on your own
              <button mat-button type="button" (click)="rejoinLead()">Rejoin the lead</button>
            }
          </span>
        </header>
        @if (item) {
          <p class="links">
            <a [routerLink]="['/cases', item.caseId, 'imaging']">Imaging</a> ·
            <a [routerLink]="['/cases', item.caseId, 'discussion']">Discussion</a> ·
            <a [routerLink]="['/cases', item.caseId, 'decision']">Decision</a>
            @if (!isLead() && isFollowing()) {
              ·
              <button type="button" class="em-inline-button" (click)="lookAround()">
                Look around on my own
              </button>
            }
          </p>
          <div class="viewer-box">
            @if (seriesId(); as shownSeriesId) {
              @defer (on immediate) {
                <em-viewer-page
                  [seriesId]="shownSeriesId"
                  [caseId]="item.caseId"
                  [canEdit]="false"
                  [canAnnotate]="(permissions()?.canAnnotate ?? false) && !item.isClosed"
                  [annotationsChanged]="annotationsVersion()"
                  [showSide]="false"
                  [followed]="followedView()"
                  (moved)="viewMoved($event)"
                />
              } @loading {
                <p class="em-muted">Opening the viewer…</p>
              }
            } @else if (series.hasValue()) {
              <p class="em-muted">No image series on this case.</p>
            }
          </div>
        }
      </section>

      <aside class="board-work" aria-label="Plans, votes and comments">
        @if (permissions()?.canRecordDecision && currentItem(); as item) {
          <section aria-labelledby="room-decision-title">
            <h2 id="room-decision-title">Decision</h2>
            @if (item.isClosed) {
              <p>
                Voting has closed on this case.
                <a [routerLink]="['/cases', item.caseId, 'decision']">Read its decision</a>
              </p>
            } @else if (isRecording()) {
              <em-decision-record-form
                [caseId]="item.caseId"
                [plans]="assessedPlans()"
                [signInMethod]="signInMethod()"
                [send]="sendDecision"
                (recorded)="decisionRecorded()"
                (stale)="changed.emit()"
              />
            } @else {
              <button mat-stroked-button type="button" (click)="isRecording.set(true)">
                Record the decision
              </button>
            }
          </section>
        }
        <section aria-labelledby="votes-title">
          <h2 id="votes-title">Votes</h2>
          <em-vote-panel
            [tally]="tally()"
            [canVote]="permissions()?.canVote ?? false"
            [isSending]="isVoting()"
            [error]="voteError()"
            (vote)="vote($event)"
          />
        </section>
        <section aria-labelledby="comments-title">
          <h2 id="comments-title">Comments</h2>
          <em-comment-thread
            [comments]="comments()"
            [canComment]="(permissions()?.canComment ?? false) && !currentItem()?.isClosed"
            [isChair]="permissions()?.isChair ?? false"
            [isSending]="isCommenting()"
            [error]="commentError()"
            (post)="comment($event)"
            (mark)="mark($event)"
          />
        </section>
        @if (currentItem(); as item) {
          <section aria-labelledby="comparison-title">
            <h2 id="comparison-title">Plan comparison</h2>
            @if (plans.hasValue() && plans.value().length) {
              <em-plan-comparison [plans]="plans.value()" [caseCode]="item.caseCode" />
            } @else {
              <p class="em-muted">No needle plan on this case.</p>
            }
          </section>
        }
        <em-clinical-caution />
      </aside>
    </div>
  `,
  styles: `
    // Takes the height its page leaves it (at least enough to read the views).
    :host {
      flex: 1 1 0px;
      min-height: 560px;
      display: flex;
      flex-direction: column;
    }
    // A workspace that fills the window below the page's title: the rail and the board's
    // work scroll on their own, the review keeps the viewer's four panes in view.
    .room {
      display: grid;
      grid-template-columns: 230px minmax(0, 1fr) 400px;
      grid-template-rows: minmax(0, 1fr);
      gap: 12px;
      flex: 1 1 0px;
      min-height: 0;
    }
    .rail,
    .board-work {
      overflow: auto;
    }
    .rail,
    .review,
    .board-work {
      background: var(--mat-sys-surface-container-low);
      border-radius: 8px;
      padding: 12px;
      min-width: 0;
    }
    h2 {
      font: var(--mat-sys-title-small);
      margin: 12px 0 6px;
    }
    .connection,
    .quorum {
      display: flex;
      gap: 6px;
      align-items: center;
      margin: 0;
    }
    .connection mat-icon,
    .quorum mat-icon {
      flex: none;
    }
    .quorum {
      color: var(--mat-sys-error);
    }
    .quorum.met {
      color: var(--mat-sys-primary);
    }
    .agenda,
    .people {
      list-style: none;
      margin: 0;
      padding: 0;
    }
    .agenda-item {
      display: flex;
      gap: 8px;
      width: 100%;
      text-align: left;
      background: none;
      border: 0;
      border-left: 3px solid transparent;
      padding: 6px;
      cursor: pointer;
      font: inherit;
      color: inherit;
    }
    .agenda-item.current {
      border-left-color: var(--mat-sys-primary);
      background: var(--mat-sys-surface-container-high);
    }
    .people li {
      display: flex;
      flex-direction: column;
      padding: 4px 0;
      border-bottom: 1px solid var(--mat-sys-outline-variant);
    }
    .lead-mark {
      font: var(--mat-sys-label-small);
      color: var(--mat-sys-primary);
      margin-left: 4px;
    }
    .hand-over {
      align-self: flex-start;
      background: none;
      border: 0;
      padding: 0;
      color: var(--mat-sys-primary);
      cursor: pointer;
      font: var(--mat-sys-label-medium);
    }
    .review-head {
      display: flex;
      flex-wrap: wrap;
      justify-content: space-between;
      gap: 8px;
      align-items: baseline;
    }
    .close {
      margin-top: 16px;
    }
    .review {
      display: flex;
      flex-direction: column;
      min-height: 0;
      height: 100%;
      box-sizing: border-box;
    }
    // A box of definite size for the viewer, whatever its content would like: the four panes
    // share exactly what the review leaves them.
    .viewer-box {
      flex: 1 1 0px;
      min-height: 0;
      position: relative;
    }
    .viewer-box em-viewer-page {
      position: absolute;
      inset: 0;
    }
    .links {
      margin: 0 0 6px;
    }
    .em-inline-button {
      background: none;
      border: 0;
      padding: 0;
      color: var(--mat-sys-primary);
      cursor: pointer;
      font: inherit;
      text-decoration: underline;
    }
    .closed {
      font: var(--mat-sys-label-small);
    }
    @media (max-width: 1100px) {
      .room {
        grid-template-columns: 1fr;
        height: auto;
      }
      .review {
        height: 80dvh;
      }
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BoardRoom {
  protected readonly socket = inject(BoardSessionSocket);
  private readonly api = inject(BoardSessionApi);
  private readonly auth = inject(AuthSession);
  private readonly router = inject(Router);
  private readonly dialog = inject(MatDialog);

  readonly meeting = input.required<MeetingView>();
  /** The agenda or the meeting changed: the host reads the meeting again. */
  readonly changed = output();
  private readonly meetingId = computed(() => this.meeting().id);

  protected readonly diagnosisLabels = primaryDiagnosisLabels;
  protected readonly specialtyLabels = specialtyLabels;

  /** False while the member looks around on their own. */
  protected readonly isFollowing = signal(true);
  /** The item chosen while looking around. */
  private readonly ownItemId = signal<string | null>(null);

  protected readonly permissions = computed(() => this.socket.snapshot()?.permissions ?? null);
  protected readonly myId = computed(() => this.auth.user()?.id ?? null);
  protected readonly isLead = computed(() => {
    const userId = this.auth.user()?.id;
    const lead = this.socket.presence()?.leadUserId ?? this.socket.view()?.leadUserId;
    return Boolean(userId) && lead === userId;
  });
  protected readonly mayHandOver = computed(
    () => this.isLead() || (this.permissions()?.isChair ?? false),
  );
  protected readonly leadName = computed(() => {
    const presence = this.socket.presence();
    const lead = presence?.members.find((member) => member.userId === presence.leadUserId);
    return lead?.displayName ?? '';
  });

  protected readonly currentItem = computed<AgendaItemView | null>(() => {
    const agenda = this.meeting().agenda;
    const wanted =
      this.isFollowing() || this.isLead()
        ? this.socket.view()?.state.agendaItemId
        : this.ownItemId();
    return (
      agenda.find((item) => item.id === wanted) ??
      agenda.find((item) => !item.isClosed) ??
      agenda[0] ??
      null
    );
  });
  private readonly currentCaseId = computed(() => this.currentItem()?.caseId);
  protected readonly plans = inject(PlanApi).list(this.currentCaseId);
  protected readonly series = inject(SeriesApi).list(this.currentCaseId);
  /** The lead's series when following it, else the case's first series. */
  protected readonly seriesId = computed(() => {
    const list = this.series.hasValue() ? this.series.value() : [];
    const led = this.isFollowing() ? this.socket.view()?.state.seriesId : null;
    return list.find((entry) => entry.id === led)?.id ?? list[0]?.id ?? null;
  });
  /** What the viewer follows: the lead's view, unless this member leads or looks around. */
  protected readonly followedView = computed<SharedView | null>(() => {
    if (this.isLead() || !this.isFollowing()) return null;
    const state = this.socket.view()?.state;
    return state ? { slice: state.slice, window: state.window, camera: state.camera } : null;
  });

  /** Bumped whenever the room hears of an annotation change: the viewer reads them again. */
  protected readonly annotationsVersion = signal(0);
  protected readonly tally = signal<TallyView | null>(null);
  protected readonly comments = signal<readonly CommentView[]>([]);
  protected readonly isVoting = signal(false);
  protected readonly voteError = signal('');
  protected readonly isCommenting = signal(false);
  protected readonly commentError = signal('');
  protected readonly closeError = signal('');
  private readonly thread = viewChild(CommentThread);

  protected readonly connectionText = computed(() => {
    switch (this.socket.connection()) {
      case 'connected':
        return 'Live';
      case 'connecting':
        return 'Connecting…';
      case 'reconnecting':
        return 'Reconnecting… what you miss is read back on return';
      default:
        return 'Not connected';
    }
  });

  constructor() {
    const destroyRef = inject(DestroyRef);
    // By id: a reloaded meeting (a new object) keeps the same socket.
    effect(() => {
      const id = this.meetingId();
      untracked(() => this.socket.open(id));
    });
    // The current item's tally and comments, read afresh when it changes or after a resync.
    effect(() => {
      const item = this.currentItem();
      untracked(() => this.readItem(item));
    });
    this.socket.resynced
      .pipe(takeUntilDestroyed(destroyRef))
      .subscribe(() => this.readItem(this.currentItem()));
    this.socket.tallies.pipe(takeUntilDestroyed(destroyRef)).subscribe((event) => {
      if (event.agendaItemId !== this.currentItem()?.id) return;
      // The broadcast has no `mine`: keep the member's own positions.
      this.tally.update((held) => ({ ...event, mine: held?.mine ?? [] }));
    });
    this.socket.comments.pipe(takeUntilDestroyed(destroyRef)).subscribe((event) => {
      if (event.agendaItemId !== this.currentItem()?.id) return;
      this.comments.update((held) =>
        held.some((comment) => comment.id === event.id)
          ? held.map((comment) => (comment.id === event.id ? event : comment))
          : [...held, event],
      );
    });
    for (const changes of [this.socket.annotations, this.socket.resynced]) {
      changes
        .pipe(takeUntilDestroyed(destroyRef))
        .subscribe(() => this.annotationsVersion.update((version) => version + 1));
    }
    for (const changes of [this.socket.agendaChanged, this.socket.decisions]) {
      changes.pipe(takeUntilDestroyed(destroyRef)).subscribe(() => this.changed.emit());
    }
  }

  protected choose(item: AgendaItemView): void {
    if (this.isLead()) {
      const held = this.socket.view()?.state ?? emptyView;
      this.socket.sendView({ ...held, agendaItemId: item.id, seriesId: null, slice: null });
      return;
    }
    this.isFollowing.set(false);
    this.ownItemId.set(item.id);
  }

  protected readonly isRecording = signal(false);
  protected readonly signInMethod = computed(() => this.auth.user()?.signInMethod ?? 'local');
  protected readonly assessedPlans = computed(() =>
    (this.plans.hasValue() ? this.plans.value() : [])
      .filter((plan) => plan.status === 'assessed')
      .map((plan) => ({ id: plan.id, name: plan.name })),
  );
  /** The decision goes over the room's socket: the signer stays present for quorum. */
  protected readonly sendDecision = (caseId: string, body: RecordDecision) =>
    from(this.socket.recordDecision(caseId, body)).pipe(
      map((answer) => {
        if (answer.ok) return answer.data;
        throw new HttpErrorResponse({ status: answer.problem.status, error: answer.problem });
      }),
    );

  protected decisionRecorded(): void {
    this.isRecording.set(false);
    this.changed.emit();
  }

  protected lookAround(): void {
    this.ownItemId.set(this.currentItem()?.id ?? null);
    this.isFollowing.set(false);
  }

  /** The lead's moves become the room's view; anyone else's stay on their own screen. */
  protected viewMoved(view: SharedView): void {
    if (!this.isLead()) return;
    this.socket.sendView({
      agendaItemId: this.currentItem()?.id ?? null,
      seriesId: this.seriesId(),
      ...view,
    });
  }

  protected rejoinLead(): void {
    this.ownItemId.set(null);
    this.isFollowing.set(true);
  }

  protected async handOver(userId: string): Promise<void> {
    const answer = await this.socket.handOver(userId);
    if (!answer.ok) this.socket.problem.set(answer.problem.detail ?? answer.problem.title);
  }

  protected async vote(vote: CastVote): Promise<void> {
    const item = this.currentItem();
    if (!item) return;
    this.isVoting.set(true);
    this.voteError.set('');
    const answer = await this.socket.castVote(item.id, vote);
    this.isVoting.set(false);
    if (answer.ok) this.tally.set(answer.data);
    else this.voteError.set(answer.problem.detail ?? answer.problem.title);
  }

  protected async comment(comment: PostComment): Promise<void> {
    const item = this.currentItem();
    if (!item) return;
    this.isCommenting.set(true);
    this.commentError.set('');
    const answer = await this.socket.postComment(item.id, comment);
    this.isCommenting.set(false);
    if (!answer.ok) {
      this.commentError.set(answer.problem.detail ?? answer.problem.title);
      return;
    }
    this.thread()?.clear();
    const posted = answer.data;
    this.comments.update((held) =>
      held.some((entry) => entry.id === posted.id) ? held : [...held, posted],
    );
  }

  protected mark(change: { id: string; isForMinutes: boolean }): void {
    this.api.markComment(change.id, change.isForMinutes).subscribe({
      next: (updated) =>
        this.comments.update((held) =>
          held.map((comment) => (comment.id === updated.id ? updated : comment)),
        ),
      error: (error: unknown) => this.commentError.set(problemMessage(error)),
    });
  }

  protected closeMeeting(): void {
    const id = this.meeting().id;
    const data: ConfirmDialogData = {
      title: 'Close the meeting?',
      message:
        'Voting ends on every item, cases without a decision go back to ready for board, and the minutes are frozen: they never change afterwards.',
      confirmLabel: 'Close and freeze the minutes',
    };
    this.dialog
      .open<ConfirmDialog, ConfirmDialogData, boolean>(ConfirmDialog, { data })
      .afterClosed()
      .subscribe((isSure) => {
        if (!isSure) return;
        this.closeError.set('');
        this.api.close(id).subscribe({
          next: () => void this.router.navigate(['/meetings', id, 'minutes']),
          error: (error: unknown) => this.closeError.set(problemMessage(error)),
        });
      });
  }

  private readItem(item: AgendaItemView | null): void {
    this.tally.set(null);
    this.comments.set([]);
    if (!item) return;
    this.api.tally(item.id).subscribe({
      next: (tally) => {
        if (this.currentItem()?.id === item.id) this.tally.set(tally);
      },
      error: (error: unknown) => this.voteError.set(problemMessage(error)),
    });
    this.api.comments(item.id).subscribe({
      next: (comments) => {
        if (this.currentItem()?.id === item.id) this.comments.set(comments);
      },
      error: (error: unknown) => this.commentError.set(problemMessage(error)),
    });
  }
}
