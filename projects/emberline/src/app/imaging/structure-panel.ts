import { DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatOption, MatSelect, type MatSelectChange } from '@angular/material/select';
import {
  MatCell,
  MatColumnDef,
  MatHeaderCell,
  MatHeaderCellDef,
  MatHeaderRow,
  MatHeaderRowDef,
  MatRow,
  MatRowDef,
  MatTable,
} from '@angular/material/table';
import {
  lesionLabel,
  structureKindLabels,
  structureKinds,
  type LesionView,
  type StructureKind,
  type StructureView,
} from '@emberline/shared';
import type { Observable } from 'rxjs';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { StructureApi } from './structure-api';
import { StructureImport } from './structure-import';
import { structureKindColours, unmappedStructureColour } from './structure-kind-colours';

/** The select's value for "none of the Summary's lesions" (a select cannot hold null). */
const noLesion = 'none';

/**
 * The structures of one series: their label values, kinds and volumes, the remapping of a kind
 * (for the presenter), each tumour's lesion of the Summary (suggested by the server, confirmed or
 * changed by the presenter, read-only for others), and the import of a label map. A kind that
 * could not be saved stays chosen, marked as not saved, until it is saved or chosen again.
 */
@Component({
  selector: 'em-structure-panel',
  imports: [
    DecimalPipe,
    MatTable,
    MatColumnDef,
    MatHeaderCell,
    MatHeaderCellDef,
    MatCell,
    MatHeaderRow,
    MatHeaderRowDef,
    MatRow,
    MatRowDef,
    TypedCellDef,
    MatSelect,
    MatOption,
    MatButton,
    MatIconButton,
    MatIcon,
    MatProgressBar,
    StructureImport,
  ],
  templateUrl: './structure-panel.html',
  styleUrl: './structure-panel.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StructurePanel {
  private readonly api = inject(StructureApi);

  readonly seriesId = input.required<string>();
  readonly canEdit = input(false);
  /** The lesions of the case's Summary, which tumours are linked to. */
  readonly lesions = input<readonly LesionView[]>([]);

  protected readonly resource = this.api.list(this.seriesId);
  protected readonly structures = computed<StructureView[]>(() =>
    this.resource.hasValue() ? this.resource.value() : [],
  );
  protected readonly loadError = computed(() => {
    const error = this.resource.error();
    return error ? problemMessage(error) : '';
  });
  protected readonly columns = ['labelValue', 'name', 'kind', 'lesion', 'volumeMl', 'voxelCount'];
  protected readonly hasTumours = computed(() =>
    this.structures().some((structure) => structure.kind === 'tumour'),
  );
  protected readonly lesionOptions = computed(() =>
    this.lesions().map((lesion) => ({ id: lesion.id, label: lesionLabel(lesion) })),
  );
  protected readonly noLesion = noLesion;
  protected readonly kindOptions = structureKinds.map((kind) => ({
    kind,
    label: structureKindLabels[kind],
  }));
  protected readonly kindLabels = structureKindLabels;

  /** Kinds chosen but not yet saved (sending, or refused), by structure id. */
  protected readonly unsavedKinds = signal<Readonly<Record<string, StructureKind>>>({});
  protected readonly savingIds = signal<ReadonlySet<string>>(new Set());
  protected readonly remapError = signal('');
  /** Lesions chosen in a select but not confirmed yet, by structure id (`noLesion` for none). */
  protected readonly chosenLesions = signal<Readonly<Record<string, string>>>({});
  protected readonly linkSavingIds = signal<ReadonlySet<string>>(new Set());
  protected readonly linkError = signal('');
  /** The structure being renamed and the name typed, or null. */
  protected readonly renaming = signal<{ id: string; name: string } | null>(null);
  protected readonly renameError = signal('');
  protected readonly isRenaming = signal(false);

  protected shownKind(structure: StructureView): StructureKind | null {
    return this.unsavedKinds()[structure.id] ?? structure.kind;
  }

  protected colourOf(kind: StructureKind | null): string {
    return kind ? structureKindColours[kind] : unmappedStructureColour;
  }

  protected isUnsaved(structure: StructureView): boolean {
    return structure.id in this.unsavedKinds() && !this.savingIds().has(structure.id);
  }

  protected choose(structure: StructureView, change: MatSelectChange<StructureKind>): void {
    this.remap(structure, change.value);
  }

  protected retry(structure: StructureView): void {
    const kind = this.unsavedKinds()[structure.id];
    if (kind) this.remap(structure, kind);
  }

  /** What the lesion select shows: the choice not yet confirmed, else the stored link. */
  protected shownLesion(structure: StructureView): string | null {
    const chosen = this.chosenLesions()[structure.id];
    if (chosen !== undefined) return chosen;
    if (structure.lesionId) return structure.lesionId;
    return structure.isLesionConfirmed ? noLesion : null;
  }

  /** Whether Confirm has something to confirm: a choice differing from a confirmed link. */
  protected canConfirm(structure: StructureView): boolean {
    const shown = this.shownLesion(structure);
    if (shown === null || this.linkSavingIds().has(structure.id)) return false;
    const stored = structure.lesionId ?? (structure.isLesionConfirmed ? noLesion : null);
    return !structure.isLesionConfirmed || shown !== stored;
  }

  /** The link in words for those who may not change it. */
  protected linkText(structure: StructureView): string {
    if (structure.isLesionConfirmed) {
      return structure.lesionLabel
        ? `${structure.lesionLabel} (confirmed)`
        : 'None of the Summary’s lesions (confirmed)';
    }
    return structure.lesionLabel
      ? `${structure.lesionLabel} (suggested, not confirmed)`
      : 'No lesion suggested';
  }

  protected chooseLesion(structure: StructureView, change: MatSelectChange<string>): void {
    this.chosenLesions.update((chosen) => ({ ...chosen, [structure.id]: change.value }));
  }

  protected confirmLesion(structure: StructureView): void {
    const shown = this.shownLesion(structure);
    if (shown === null) return;
    const lesionId = shown === noLesion ? null : shown;
    this.saveLink(structure, this.api.confirmLesion(structure.id, lesionId), 'confirmed');
  }

  protected releaseLesion(structure: StructureView): void {
    this.saveLink(structure, this.api.releaseLesion(structure.id), 'released');
  }

  protected imported(): void {
    // The import answers with what it created; the list is asked again for the series as a whole.
    this.resource.reload();
  }

  private remap(structure: StructureView, kind: StructureKind): void {
    this.unsavedKinds.update((kinds) => ({ ...kinds, [structure.id]: kind }));
    this.savingIds.update((ids) => new Set(ids).add(structure.id));
    this.remapError.set('');
    this.api.remap(structure.id, kind).subscribe({
      next: (saved) => {
        this.settle(structure.id);
        this.unsavedKinds.update((kinds) =>
          Object.fromEntries(Object.entries(kinds).filter(([id]) => id !== structure.id)),
        );
        this.resource.update((list) =>
          list?.map((candidate) => (candidate.id === saved.id ? saved : candidate)),
        );
      },
      error: (error: unknown) => {
        this.settle(structure.id);
        this.remapError.set(
          `Label ${structure.labelValue} was not set to ${structureKindLabels[kind]}. ` +
            problemMessage(error),
        );
      },
    });
  }

  protected startRename(structure: StructureView): void {
    this.renameError.set('');
    this.renaming.set({ id: structure.id, name: structure.name });
  }

  protected typeName(name: string): void {
    this.renaming.update((current) => (current ? { ...current, name } : current));
  }

  /** Saves the new name; the server trims it and refuses a taken one (409, shown here). */
  protected saveRename(structure: StructureView): void {
    const name = this.renaming()?.name.trim() ?? '';
    if (!name || name.length > 80) {
      this.renameError.set('A name has 1 to 80 characters.');
      return;
    }
    if (name === structure.name) {
      this.renaming.set(null);
      return;
    }
    this.isRenaming.set(true);
    this.renameError.set('');
    this.api.rename(structure.id, name).subscribe({
      next: (saved) => {
        this.isRenaming.set(false);
        this.renaming.set(null);
        this.resource.update((list) =>
          list?.map((candidate) => (candidate.id === saved.id ? saved : candidate)),
        );
      },
      error: (error: unknown) => {
        this.isRenaming.set(false);
        this.renameError.set(
          `Label ${structure.labelValue} was not renamed. ${problemMessage(error)}`,
        );
      },
    });
  }

  /** Sends a link change; the list is asked again, since other tumours' suggestions follow. */
  private saveLink(
    structure: StructureView,
    request: Observable<StructureView>,
    what: 'confirmed' | 'released',
  ): void {
    this.linkSavingIds.update((ids) => new Set(ids).add(structure.id));
    this.linkError.set('');
    request.subscribe({
      next: () => {
        this.endLinkSaving(structure.id);
        this.chosenLesions.update((chosen) =>
          Object.fromEntries(Object.entries(chosen).filter(([id]) => id !== structure.id)),
        );
        this.resource.reload();
      },
      error: (error: unknown) => {
        this.endLinkSaving(structure.id);
        this.linkError.set(
          `The lesion of label ${structure.labelValue} was not ${what}. ${problemMessage(error)}`,
        );
      },
    });
  }

  private endLinkSaving(structureId: string): void {
    this.linkSavingIds.update((ids) => {
      const rest = new Set(ids);
      rest.delete(structureId);
      return rest;
    });
  }

  private settle(structureId: string): void {
    this.savingIds.update((ids) => {
      const rest = new Set(ids);
      rest.delete(structureId);
      return rest;
    });
  }
}
