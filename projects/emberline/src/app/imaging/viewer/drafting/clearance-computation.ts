import type { StructureKind } from '@emberline/shared';
import { kindField, pathFigures, type KindField, type PathFigures } from './clearance-fields';
import type { ClearanceLoad, PathRequest } from './clearance-protocol';

/**
 * The distance fields of one label map, computed one kind at a time so that measurements can
 * be answered between two kinds (with the kinds ready so far).
 */
export class ClearanceComputation {
  private readonly fields: KindField[] = [];
  private readonly pending: { kind: StructureKind; labelValues: number[] }[];

  constructor(private readonly input: Omit<ClearanceLoad, 'type'>) {
    this.pending = [...input.kinds];
  }

  get isDone(): boolean {
    return this.pending.length === 0;
  }

  /** Computes the next kind's field; null once every kind is done (or has no voxel). */
  computeNext(): { kind: StructureKind; computeMs: number } | null {
    const next = this.pending.shift();
    if (!next) return null;
    const field = kindField(
      this.input.labels,
      this.input.geometry,
      next.kind,
      next.labelValues,
      this.input.paddingMm,
    );
    if (field) this.fields.push(field);
    return { kind: next.kind, computeMs: field?.computeMs ?? 0 };
  }

  figures(paths: readonly PathRequest[]): PathFigures[] {
    return paths.map((path) => pathFigures(this.fields, path.entryLps, path.targetLps));
  }
}
