import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import { RouterLink } from '@angular/router';
import { roleLabels, specialtyLabels, type Role } from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { BoardApi } from './board-api';
import { TypedCellDef } from '../core/typed-cell-def';
import { BoardMeetings } from '../meetings/board-meetings';

/** One board and its members with their specialties. */
@Component({
  selector: 'em-board-detail',
  imports: [
    RouterLink,
    MatTableModule,
    TypedCellDef,
    MatProgressBar,
    MatButton,
    MatIcon,
    BoardMeetings,
  ],
  template: `
    <section class="em-page" aria-labelledby="board-title">
      <a class="back" routerLink="/boards"
        ><mat-icon aria-hidden="true">arrow_back</mat-icon> All boards</a
      >
      <h1 id="board-title">{{ board()?.name ?? 'Board' }}</h1>
      @if (board()?.description) {
        <p>{{ board()?.description }}</p>
      }
      @if (members.isLoading()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading members" />
      }
      @if (errorText()) {
        <div class="em-panel" role="alert">
          <p>{{ errorText() }}</p>
          <button mat-stroked-button type="button" (click)="members.reload()">Try again</button>
        </div>
      } @else if (members.hasValue()) {
        <div class="em-panel">
          <h2 id="members-title">Members</h2>
          <div class="em-table-scroll" tabindex="0" role="region" aria-labelledby="members-title">
            <table mat-table [dataSource]="members.value()" aria-labelledby="members-title">
              <ng-container matColumnDef="displayName">
                <th mat-header-cell *matHeaderCellDef>Name</th>
                <td mat-cell *emCellDef="let member of members.value()">
                  {{ member.displayName }}
                </td>
              </ng-container>
              <ng-container matColumnDef="specialty">
                <th mat-header-cell *matHeaderCellDef>Specialty on this board</th>
                <td mat-cell *emCellDef="let member of members.value()">
                  {{ specialtyLabels[member.specialty] }}
                </td>
              </ng-container>
              <ng-container matColumnDef="roles">
                <th mat-header-cell *matHeaderCellDef>Roles</th>
                <td mat-cell *emCellDef="let member of members.value()">
                  {{ roleText(member.roles) }}
                </td>
              </ng-container>
              <ng-container matColumnDef="email">
                <th mat-header-cell *matHeaderCellDef>E-mail</th>
                <td mat-cell *emCellDef="let member of members.value()">
                  <a [href]="'mailto:' + member.email">{{ member.email }}</a>
                </td>
              </ng-container>
              <tr mat-header-row *matHeaderRowDef="columns"></tr>
              <tr mat-row *matRowDef="let row; columns: columns"></tr>
            </table>
          </div>
        </div>
        <em-board-meetings
          [boardId]="id()"
          [boardName]="board()?.name ?? ''"
          [members]="members.value()"
        />
      }
    </section>
  `,
  styles: `
    .back {
      display: inline-flex;
      align-items: center;
      gap: 4px;
      text-decoration: none;
      font: var(--mat-sys-label-large);
    }

    table {
      width: 100%;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BoardDetail {
  private readonly api = inject(BoardApi);

  /** From the route (`/boards/:id`). */
  readonly id = input.required<string>();

  private readonly boards = this.api.boards();
  protected readonly members = this.api.members(this.id);
  protected readonly board = computed(() =>
    this.boards.hasValue()
      ? this.boards.value().find((board) => board.id === this.id())
      : undefined,
  );
  protected readonly columns = ['displayName', 'specialty', 'roles', 'email'];
  protected readonly specialtyLabels = specialtyLabels;
  protected readonly errorText = computed(() => {
    const error = this.members.error();
    if (!error) return '';
    if (error instanceof HttpErrorResponse && error.status === 404) {
      return 'This board does not exist, or you are not one of its members.';
    }
    return `The members could not be loaded: ${problemMessage(error)}`;
  });

  protected roleText(roles: readonly Role[]): string {
    return roles.map((role) => roleLabels[role]).join(', ');
  }
}
