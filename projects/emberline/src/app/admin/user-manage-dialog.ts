import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import {
  NonNullableFormBuilder,
  ReactiveFormsModule,
  Validators,
  type FormGroupDirective,
} from '@angular/forms';
import { MatButton, MatIconButton } from '@angular/material/button';
import { MatCheckbox } from '@angular/material/checkbox';
import {
  MAT_DIALOG_DATA,
  MatDialogActions,
  MatDialogContent,
  MatDialogRef,
  MatDialogTitle,
} from '@angular/material/dialog';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatIcon } from '@angular/material/icon';
import { MatInput } from '@angular/material/input';
import { MatOption, MatSelect } from '@angular/material/select';
import { MatSlideToggle } from '@angular/material/slide-toggle';
import {
  createUserSchema,
  specialties,
  specialtyLabels,
  type AdminUserView,
  type BoardView,
  type Specialty,
} from '@emberline/shared';
import { FieldError } from '../core/field-error';
import { applyFieldErrors } from '../core/server-field-errors';
import { problemMessage } from '../core/problem';
import { zodValidator } from '../core/zod-validator';
import { AdminApi, type UserChange } from './admin-api';
import { chosenRoles, roleChoice, roleOptions } from './role-choice';

export interface UserManageData {
  user: AdminUserView;
  boards: readonly BoardView[];
}

type Membership = AdminUserView['boards'][number];

/** One account: name, roles, active or not, and its board memberships; each part saves at once. */
@Component({
  selector: 'em-user-manage-dialog',
  imports: [
    ReactiveFormsModule,
    MatDialogTitle,
    MatDialogContent,
    MatDialogActions,
    MatFormField,
    MatLabel,
    MatError,
    MatInput,
    MatCheckbox,
    MatSlideToggle,
    MatSelect,
    MatOption,
    MatButton,
    MatIconButton,
    MatIcon,
    FieldError,
  ],
  templateUrl: './user-manage-dialog.html',
  styleUrl: './user-manage-dialog.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class UserManageDialog {
  private readonly api = inject(AdminApi);
  private readonly dialogRef = inject<MatDialogRef<UserManageDialog>>(MatDialogRef);
  private readonly formBuilder = inject(NonNullableFormBuilder);
  protected readonly data = inject<UserManageData>(MAT_DIALOG_DATA);

  protected readonly roleOptions = roleOptions;
  protected readonly specialties = specialties;
  protected readonly specialtyLabels = specialtyLabels;
  protected readonly user = signal(this.data.user);
  protected readonly memberships = signal<readonly Membership[]>(this.data.user.boards);
  protected readonly isBusy = signal(false);
  protected readonly accountError = signal('');
  protected readonly accountSaved = signal('');
  protected readonly membershipError = signal('');

  protected readonly accountForm = this.formBuilder.group({
    displayName: [
      this.data.user.displayName,
      [Validators.required, zodValidator(createUserSchema.shape.displayName)],
    ],
    roles: roleChoice(this.data.user.roles),
    isActive: [this.data.user.isActive],
  });
  protected readonly membershipForm = this.formBuilder.group({
    boardId: ['', Validators.required],
    specialty: ['' as Specialty | '', Validators.required],
  });
  protected readonly boardsToJoin = computed(() =>
    this.data.boards.filter(
      (board) => !this.memberships().some((membership) => membership.boardId === board.id),
    ),
  );

  protected saveAccount(): void {
    if (this.accountForm.invalid) {
      this.accountForm.markAllAsTouched();
      return;
    }
    const controls = this.accountForm.controls;
    const change: UserChange = {};
    if (controls.displayName.dirty) change.displayName = controls.displayName.value;
    if (controls.roles.dirty) change.roles = chosenRoles(controls.roles);
    if (controls.isActive.dirty) change.isActive = controls.isActive.value;
    if (Object.keys(change).length === 0) {
      this.accountSaved.set('Nothing to save: no field has changed.');
      return;
    }
    this.isBusy.set(true);
    this.accountError.set('');
    this.accountSaved.set('');
    this.api.updateUser(this.user().id, change).subscribe({
      next: (updated) => {
        this.isBusy.set(false);
        this.user.set(updated);
        this.accountForm.markAsPristine();
        this.accountSaved.set('Saved.');
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        const unmatched = applyFieldErrors(this.accountForm, error);
        this.accountError.set(['Not saved.', problemMessage(error), ...unmatched].join(' '));
      },
    });
  }

  protected addMembership(formDirective: FormGroupDirective): void {
    const { boardId, specialty } = this.membershipForm.getRawValue();
    if (this.membershipForm.invalid || specialty === '') {
      this.membershipForm.markAllAsTouched();
      return;
    }
    const board = this.data.boards.find((candidate) => candidate.id === boardId);
    this.isBusy.set(true);
    this.membershipError.set('');
    this.api.addMember(boardId, this.user().id, specialty).subscribe({
      next: () => {
        this.isBusy.set(false);
        this.memberships.update((list) => [
          ...list,
          { boardId, boardName: board?.name ?? boardId, specialty },
        ]);
        formDirective.resetForm();
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        const unmatched = applyFieldErrors(this.membershipForm, error);
        this.membershipError.set(
          ['The membership was not added.', problemMessage(error), ...unmatched].join(' '),
        );
      },
    });
  }

  protected removeMembership(membership: Membership): void {
    this.isBusy.set(true);
    this.membershipError.set('');
    this.api.removeMember(membership.boardId, this.user().id).subscribe({
      next: () => {
        this.isBusy.set(false);
        this.memberships.update((list) =>
          list.filter((item) => item.boardId !== membership.boardId),
        );
      },
      error: (error: unknown) => {
        this.isBusy.set(false);
        this.membershipError.set(
          ['The membership was not removed.', problemMessage(error)].join(' '),
        );
      },
    });
  }

  protected close(): void {
    this.dialogRef.close();
  }
}
