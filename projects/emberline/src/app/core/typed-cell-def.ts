import { Directive, input } from '@angular/core';
import { CdkCellDef } from '@angular/cdk/table';
import { MatCellDef } from '@angular/material/table';

/**
 * `matCellDef` with a typed row: `<td mat-cell *emCellDef="let row; of: rows()">`. Material's own
 * cell definition gives `let row` the type `any`, which hides mistakes in strict templates.
 */
@Directive({
  selector: '[emCellDef]',
  providers: [{ provide: CdkCellDef, useExisting: TypedCellDef }],
})
export class TypedCellDef<T> extends MatCellDef {
  /** The rows of the table; read only for its type. */
  readonly emCellDefOf = input<readonly T[]>();

  static ngTemplateContextGuard<T>(
    directive: TypedCellDef<T>,
    context: unknown,
  ): context is { $implicit: T; index: number } {
    // Only the signature matters: it tells the template type checker what `let row` is.
    return directive !== undefined || context !== undefined;
  }
}
