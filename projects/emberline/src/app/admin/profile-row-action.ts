import { Directive, TemplateRef, inject, input } from '@angular/core';

/** What the row action's template receives: the profile of its row. */
export interface ProfileRowActionContext<T> {
  $implicit: T;
}

/**
 * The action a profile screen adds beside "Edit" on each row of its list page:
 * `<button *emRowAction="let profile; of: rows()">`. `of` is read only for its type,
 * so that `let profile` is typed in strict templates.
 */
@Directive({ selector: '[emRowAction]' })
export class ProfileRowAction<T> {
  readonly template = inject<TemplateRef<ProfileRowActionContext<T>>>(TemplateRef);
  /** The rows of the list; read only for its type. */
  readonly emRowActionOf = input<readonly T[] | undefined>();

  static ngTemplateContextGuard<T>(
    directive: ProfileRowAction<T>,
    context: unknown,
  ): context is ProfileRowActionContext<T> {
    // Only the signature matters: it tells the template type checker what `let profile` is.
    return directive !== undefined || context !== undefined;
  }
}
