import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButton } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIcon } from '@angular/material/icon';
import { MatProgressBar } from '@angular/material/progress-bar';
import { MatTableModule } from '@angular/material/table';
import { roleLabels, specialtyLabels, type AdminUserView, type Role } from '@emberline/shared';
import { problemMessage } from '../core/problem';
import { AdminApi } from './admin-api';
import { RolePolicies } from './role-policies';
import { UserCreateDialog } from './user-create-dialog';
import { UserManageDialog, type UserManageData } from './user-manage-dialog';
import { TypedCellDef } from '../core/typed-cell-def';

/** Accounts, their roles, activity and board memberships; and the second-factor policy by role. */
@Component({
  selector: 'em-admin-users',
  imports: [
    DatePipe,
    MatTableModule,
    TypedCellDef,
    MatButton,
    MatIcon,
    MatProgressBar,
    RolePolicies,
  ],
  templateUrl: './admin-users.html',
  styleUrl: './admin-users.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AdminUsers {
  private readonly api = inject(AdminApi);
  private readonly dialog = inject(MatDialog);

  protected readonly users = this.api.users();
  private readonly boards = this.api.boards();
  protected readonly columns = [
    'name',
    'roles',
    'signIn',
    'boards',
    'lastSignInAt',
    'status',
    'actions',
  ];
  protected readonly specialtyLabels = specialtyLabels;
  protected readonly errorText = computed(() =>
    this.users.error() ? problemMessage(this.users.error()) : '',
  );

  protected roleText(roles: readonly Role[]): string {
    return roles.length ? roles.map((role) => roleLabels[role]).join(', ') : 'No role';
  }

  protected openCreate(): void {
    this.dialog
      .open<UserCreateDialog, undefined, AdminUserView>(UserCreateDialog, {
        width: '520px',
        maxWidth: '95vw',
      })
      .afterClosed()
      .subscribe((created) => {
        if (created) this.users.reload();
      });
  }

  protected openManage(user: AdminUserView): void {
    const data: UserManageData = {
      user,
      boards: this.boards.hasValue() ? this.boards.value() : [],
    };
    this.dialog
      .open<UserManageDialog, UserManageData>(UserManageDialog, {
        data,
        width: '640px',
        maxWidth: '95vw',
      })
      .afterClosed()
      .subscribe(() => this.users.reload());
  }
}
