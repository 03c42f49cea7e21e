import { DatePipe, NgTemplateOutlet } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, input, output, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import { MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import type { CommentView, PostComment } from '@emberline/shared';

interface ThreadEntry {
  comment: CommentView;
  replies: CommentView[];
}

/** The comments of one agenda item, threaded (one level of answers), newest thread last. */
@Component({
  selector: 'em-comment-thread',
  imports: [
    DatePipe,
    NgTemplateOutlet,
    FormsModule,
    MatButton,
    MatCheckbox,
    MatFormField,
    MatLabel,
    MatInput,
  ],
  template: `
    @if (threads().length === 0) {
      <p class="em-muted">No comment on this case yet.</p>
    }
    <ol class="threads">
      @for (thread of threads(); track thread.comment.id) {
        <li>
          <ng-container
            *ngTemplateOutlet="entry; context: { $implicit: thread.comment }"
          ></ng-container>
          @if (thread.replies.length) {
            <ol class="replies">
              @for (reply of thread.replies; track reply.id) {
                <li>
                  <ng-container
                    *ngTemplateOutlet="entry; context: { $implicit: reply }"
                  ></ng-container>
                </li>
              }
            </ol>
          }
          @if (canComment()) {
            <button type="button" class="reply" (click)="replyTo.set(thread.comment.id)">
              Answer
            </button>
          }
        </li>
      }
    </ol>
    <ng-template #entry let-comment>
      <article class="comment">
        <header>
          <strong>{{ comment.author.displayName }}</strong>
          <time [attr.datetime]="comment.createdAt">{{ comment.createdAt | date: 'HH:mm' }}</time>
          @if (isChair()) {
            <mat-checkbox
              [checked]="comment.isForMinutes"
              (change)="mark.emit({ id: comment.id, isForMinutes: $event.checked })"
              >For the minutes</mat-checkbox
            >
          } @else if (comment.isForMinutes) {
            <span class="marked">For the minutes</span>
          }
        </header>
        <p>{{ comment.body }}</p>
      </article>
    </ng-template>
    @if (canComment()) {
      <form class="new" (ngSubmit)="send()">
        @if (replyTo()) {
          <p class="em-muted">
            Answering a comment ·
            <button type="button" class="reply" (click)="replyTo.set(null)">cancel</button>
          </p>
        }
        <mat-form-field appearance="outline" subscriptSizing="dynamic">
          <mat-label>Comment</mat-label>
          <textarea
            matInput
            name="body"
            rows="2"
            maxlength="4000"
            [(ngModel)]="draft"
            [disabled]="isSending()"
          ></textarea>
        </mat-form-field>
        @if (error()) {
          <p class="em-error-text" role="alert">{{ error() }}</p>
        }
        <button mat-stroked-button type="submit" [disabled]="isSending() || !draft.trim()">
          Post
        </button>
      </form>
    }
  `,
  styles: `
    .threads,
    .replies {
      list-style: none;
      margin: 0;
      padding: 0;
    }
    .replies {
      margin-left: 16px;
      border-left: 2px solid var(--mat-sys-outline-variant);
      padding-left: 8px;
    }
    .comment header {
      display: flex;
      gap: 8px;
      align-items: baseline;
      flex-wrap: wrap;
    }
    .comment p {
      margin: 2px 0 8px;
      white-space: pre-wrap;
    }
    .marked {
      font: var(--mat-sys-label-small);
      color: var(--mat-sys-primary);
    }
    .reply {
      background: none;
      border: 0;
      padding: 0;
      color: var(--mat-sys-primary);
      cursor: pointer;
      font: var(--mat-sys-label-medium);
    }
    .new mat-form-field {
      width: 100%;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CommentThread {
  readonly comments = input<readonly CommentView[]>([]);
  readonly canComment = input(false);
  readonly isChair = input(false);
  readonly isSending = input(false);
  readonly error = input('');
  readonly post = output<PostComment>();
  readonly mark = output<{ id: string; isForMinutes: boolean }>();

  protected draft = '';
  protected readonly replyTo = signal<string | null>(null);

  protected readonly threads = computed<ThreadEntry[]>(() => {
    const all = [...this.comments()].sort((a, b) => a.createdAt.localeCompare(b.createdAt));
    const roots = all.filter((comment) => !comment.parentId);
    return roots.map((comment) => ({
      comment,
      replies: all.filter((reply) => reply.parentId === comment.id),
    }));
  });

  protected send(): void {
    const body = this.draft.trim();
    if (!body) return;
    const parentId = this.replyTo();
    this.post.emit(parentId ? { body, parentId } : { body });
  }

  /** Called by the host once the comment is posted. */
  clear(): void {
    this.draft = '';
    this.replyTo.set(null);
  }
}
