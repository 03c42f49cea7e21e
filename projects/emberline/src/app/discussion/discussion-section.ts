import { DatePipe, NgTemplateOutlet } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import {
  votePositionLabels,
  type AnnotationKind,
  type AnnotationView,
  type ImageSeriesView,
} from '@emberline/shared';
import { CaseFileState } from '../cases/case-file-state';
import { problemMessage } from '../core/problem';
import { SeriesApi } from '../imaging/series-api';
import { KeyImageList } from '../key-images/key-image-list';
import { PlanApi } from '../plans/plan-api';
import { commentsByAgendaItem, type CommentThread } from './comment-threads';
import { DiscussionApi } from './discussion-api';
import { voteOptionLabel } from './vote-option-label';

const annotationKindLabels: Record<AnnotationKind, string> = {
  point: 'Point',
  line: 'Line',
  note: 'Note',
};

/**
 * The case file's Discussion section: the key images kept from the viewer (their author may
 * remove them here), what the board marked on the images, said about the case at each meeting
 * and voted. Annotations, comments and votes are made in the board session and read only here.
 */
@Component({
  selector: 'em-discussion-section',
  imports: [DatePipe, NgTemplateOutlet, MatButton, MatIcon, MatProgressBar, KeyImageList],
  templateUrl: './discussion-section.html',
  styleUrl: './discussion-section.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class DiscussionSection {
  private readonly state = inject(CaseFileState);
  private readonly api = inject(DiscussionApi);

  protected readonly caseId = this.state.caseId;
  protected readonly kindLabels = annotationKindLabels;
  protected readonly positionLabels = votePositionLabels;

  protected readonly annotationResource = this.api.annotations(this.state.caseId);
  protected readonly commentResource = this.api.comments(this.state.caseId);
  protected readonly voteResource = this.api.votes(this.state.caseId);
  private readonly seriesResource = inject(SeriesApi).list(this.state.caseId);
  private readonly planResource = inject(PlanApi).list(this.state.caseId);

  protected readonly annotations = computed<AnnotationView[]>(() =>
    this.annotationResource.hasValue()
      ? [...this.annotationResource.value()].sort((a, b) => a.createdAt.localeCompare(b.createdAt))
      : [],
  );
  protected readonly agendaItems = computed(() =>
    this.voteResource.hasValue() ? this.voteResource.value() : [],
  );
  protected readonly commentGroups = computed(() =>
    this.commentResource.hasValue()
      ? commentsByAgendaItem(this.commentResource.value(), this.agendaItems())
      : [],
  );
  protected readonly hasVotes = computed(() =>
    this.agendaItems().some((item) => item.votes.length > 0),
  );

  protected readonly annotationError = computed(() => errorText(this.annotationResource.error()));
  protected readonly commentError = computed(() => errorText(this.commentResource.error()));
  protected readonly voteError = computed(() => errorText(this.voteResource.error()));

  private readonly series = computed<ImageSeriesView[]>(() =>
    this.seriesResource.hasValue() ? this.seriesResource.value() : [],
  );
  private readonly plans = computed(() =>
    this.planResource.hasValue() ? this.planResource.value() : [],
  );

  /** "Series 3 · CT", or the series' place among the case's when it carries no number. */
  protected seriesLabel(seriesId: string): string {
    const all = this.series();
    const index = all.findIndex((series) => series.id === seriesId);
    if (index < 0) return 'A series no longer listed';
    const series = all[index];
    return `Series ${series.seriesNumber ?? `#${index + 1}`} · ${series.modality}`;
  }

  /** `seriesLabel` for the key image list, bound to this section. */
  protected readonly seriesLabelOf = (seriesId: string): string => this.seriesLabel(seriesId);

  protected optionLabel(option: string): string {
    return voteOptionLabel(option, this.plans());
  }

  protected trackThread(thread: CommentThread): string {
    return thread.comment.id;
  }
}

function errorText(error: unknown): string {
  return error ? problemMessage(error) : '';
}
