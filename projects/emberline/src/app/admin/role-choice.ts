import { FormControl, FormGroup } from '@angular/forms';
import { roleLabels, roles, type Role } from '@emberline/shared';

/** One checkbox a role, for the forms that grant and revoke roles. */
export type RoleChoice = FormGroup<Record<Role, FormControl<boolean>>>;

export const roleOptions = roles.map((role) => ({ role, label: roleLabels[role] }));

export function roleChoice(granted: readonly Role[]): RoleChoice {
  const controls = {} as Record<Role, FormControl<boolean>>;
  for (const role of roles)
    controls[role] = new FormControl(granted.includes(role), { nonNullable: true });
  return new FormGroup(controls);
}

export function chosenRoles(choice: RoleChoice): Role[] {
  return roles.filter((role) => choice.controls[role].value);
}
