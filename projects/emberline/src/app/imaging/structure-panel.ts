import { DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatIconButton } from '@angular/material/button';
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
  structureKindLabels,
  structureKinds,
  type StructureKind,
  type StructureView,
} from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { TypedCellDef } from '../core/typed-cell-def';
import { StructureApi } from './structure-api';
import { StructureImport } from './structure-import';
import { structureKindColours, unmappedStructureColour } from './structure-kind-colours';

/**
 * The structures of one series: their label values, kinds and volumes, the remapping of a kind
 * (for the presenter), and the import of a label map. A kind that could not be saved stays
 * chosen, marked as not saved, until it is saved or chosen again.
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

  protected readonly resource = this.api.list(this.seriesId);
  protected readonly structures = computed<StructureView[]>(() =>
    this.resource.hasValue() ? this.resource.value() : [],
  );
  protected readonly loadError = computed(() => {
    const error = this.resource.error();
    return error ? problemMessage(error) : '';
  });
  protected readonly columns = ['labelValue', 'name', 'kind', 'volumeMl', 'voxelCount'];
  protected readonly kindOptions = structureKinds.map((kind) => ({
    kind,
    label: structureKindLabels[kind],
  }));
  protected readonly kindLabels = structureKindLabels;

  /** Kinds chosen but not yet saved (sending, or refused), by structure id. */
  protected readonly unsavedKinds = signal<Readonly<Record<string, StructureKind>>>({});
  protected readonly savingIds = signal<ReadonlySet<string>>(new Set());
  protected readonly remapError = signal('');

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

  private settle(structureId: string): void {
    this.savingIds.update((ids) => {
      const rest = new Set(ids);
      rest.delete(structureId);
      return rest;
    });
  }
}
