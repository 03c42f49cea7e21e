import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatProgressBar } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { specialtyLabels } from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { BoardApi } from './board-api';

/** The boards the user sits on, with their own specialty on each. */
@Component({
  selector: 'em-board-list',
  imports: [RouterLink, MatProgressBar, MatButton],
  template: `
    <section class="em-page" aria-labelledby="boards-title">
      <h1 id="boards-title">Boards</h1>
      @if (boards.isLoading()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading boards" />
      }
      @if (errorText()) {
        <div class="em-panel" role="alert">
          <p>The boards could not be loaded: {{ errorText() }}</p>
          <button mat-stroked-button type="button" (click)="boards.reload()">Try again</button>
        </div>
      } @else if (boards.hasValue()) {
        @if (boards.value().length) {
          <ul class="boards">
            @for (board of boards.value(); track board.id) {
              <li class="em-panel">
                <h2>
                  <a [routerLink]="['/boards', board.id]">{{ board.name }}</a>
                </h2>
                @if (board.description) {
                  <p>{{ board.description }}</p>
                }
                <p class="em-muted">
                  {{ board.memberCount }} {{ board.memberCount === 1 ? 'member' : 'members' }}
                  @if (board.mySpecialty) {
                    · you sit as {{ specialtyLabels[board.mySpecialty] }}
                  }
                </p>
              </li>
            }
          </ul>
        } @else {
          <p class="em-panel">
            You are not a member of any board yet. An administrator adds members to boards.
          </p>
        }
      }
    </section>
  `,
  styles: `
    .boards {
      list-style: none;
      margin: 0;
      padding: 0;
      display: grid;
      grid-template-columns: repeat(auto-fill, minmax(280px, 1fr));
      gap: 16px;
    }

    .boards p {
      margin: 0;
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BoardList {
  protected readonly boards = inject(BoardApi).boards();
  protected readonly specialtyLabels = specialtyLabels;
  protected readonly errorText = computed(() =>
    this.boards.error() ? problemMessage(this.boards.error()) : '',
  );
}
