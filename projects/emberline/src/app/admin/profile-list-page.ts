import type { HttpResourceRef } from '@angular/common/http';
import { NgTemplateOutlet } from '@angular/common';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  contentChild,
  contentChildren,
  input,
  output,
  viewChild,
  type AfterContentInit,
} from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatColumnDef, MatTable, MatTableModule } from '@angular/material/table';
import { ClinicalCaution } from '../core/clinical-caution';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { ProfileRowAction } from './profile-row-action';

/** What the list page itself shows of a profile: its name, version and standing. */
export interface ProfileRow {
  id: string;
  name: string;
  /** Made anew when an edit changes a version that an assessment used. */
  version: number;
  /** A retired profile is shown dimmed (applicator profiles). */
  isRetired?: boolean;
  /** The default for new assessments is marked under its name (safety profiles). */
  isDefault?: boolean;
}

/**
 * The page of a list of versioned profiles (applicator or safety profiles): the header with
 * "New profile", the loading bar, the load error, the table with the name and actions columns,
 * the messages and the aside on where the values come from, with the clinical caution.
 *
 * The screen supplies the columns between name and actions as `matColumnDef` content children,
 * registered on the table with `addColumnDef`, and its row action (`*emRowAction`) shown beside
 * "Edit". The table stays in the page, hidden until the list has arrived, so that those columns
 * are registered before its first render.
 */
@Component({
  selector: 'em-profile-list-page',
  imports: [
    NgTemplateOutlet,
    MatTableModule,
    TypedCellDef,
    MatButton,
    MatIcon,
    MatProgressBar,
    ClinicalCaution,
  ],
  templateUrl: './profile-list-page.html',
  styleUrl: './profile-list-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ProfileListPage<T extends ProfileRow> implements AfterContentInit {
  /** The list as the server answers it; its loading and error states show here. */
  readonly profiles = input.required<HttpResourceRef<T[] | undefined>>();
  /** "Applicator profiles": the heading, and in lower case the loading and error texts. */
  readonly heading = input.required<string>();
  readonly emptyText = input.required<string>();
  readonly aboutTitle = input.required<string>();
  /** The paragraphs of the aside, before the clinical caution. */
  readonly about = input.required<readonly string[]>();
  /** What the last action did, announced politely. */
  readonly statusText = input('');
  /** Why the last action failed, announced at once. */
  readonly errorText = input('');

  readonly create = output();
  readonly edit = output<T>();

  private readonly screenColumns = contentChildren(MatColumnDef);
  protected readonly rowAction = contentChild<ProfileRowAction<T>>(ProfileRowAction);
  private readonly table = viewChild.required<MatTable<T>>(MatTable);

  protected readonly columns = computed(() => [
    'name',
    ...this.screenColumns().map((column) => column.name),
    'actions',
  ]);
  protected readonly noun = computed(() => this.heading().toLowerCase());
  protected readonly rows = computed<readonly T[]>(() => {
    const profiles = this.profiles();
    return profiles.hasValue() ? profiles.value() : [];
  });
  protected readonly loadError = computed(() => {
    const error = this.profiles().error();
    return error ? problemMessage(error) : '';
  });
  protected readonly isListShown = computed(() => !this.loadError() && this.profiles().hasValue());

  ngAfterContentInit(): void {
    this.registerScreenColumns();
  }

  private registerScreenColumns(): void {
    const table = this.table();
    for (const column of this.screenColumns()) table.addColumnDef(column);
  }
}
