import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, OnInit, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTableModule } from '@angular/material/table';
import { MatTooltipModule } from '@angular/material/tooltip';
import { RouterLink } from '@angular/router';
import { filter, switchMap } from 'rxjs';
import { AuthStore } from '../auth/auth-store';
import { ROLE_LABELS, ROLES, type Role } from '../auth/roles';
import { apiErrorMessage } from '../shared/api-error';
import { ConfirmDialog, type ConfirmData } from '../shared/confirm-dialog';
import { NewUserDialog } from './new-user-dialog';
import { InviteDialog } from './invite-dialog';
import { UserApi, type UserChange, type UserRow } from './user-api';

@Component({
  selector: 'lg-user-admin',
  imports: [DatePipe, RouterLink, MatTableModule, MatSelectModule, MatButtonModule, MatIconModule, MatFormFieldModule, MatInputModule, MatPaginatorModule, MatProgressBarModule, MatTooltipModule],
  templateUrl: './user-admin.html',
  styleUrl: './user-admin.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class UserAdmin implements OnInit {
  private readonly api = inject(UserApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  private readonly store = inject(AuthStore);

  protected readonly columns = ['name', 'email', 'role', 'status', 'lastSignInAt', 'actions'];
  protected readonly roles = ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }));
  protected readonly roleLabels = ROLE_LABELS;
  protected readonly me = this.store.user;

  private readonly users = signal<UserRow[]>([]);
  protected readonly loading = signal(true);
  protected readonly loadError = signal<string | null>(null);
  protected readonly query = signal('');
  protected readonly pageIndex = signal(0);
  protected readonly pageSize = signal(25);

  protected readonly filtered = computed(() => {
    const q = this.query().trim().toLowerCase();
    const all = this.users();
    return q ? all.filter((u) => `${u.name} ${u.email} ${ROLE_LABELS[u.role]}`.toLowerCase().includes(q)) : all;
  });
  protected readonly page = computed(() => {
    const start = this.pageIndex() * this.pageSize();
    return this.filtered().slice(start, start + this.pageSize());
  });
  protected readonly activeAdmins = computed(() => this.users().filter((u) => u.role === 'admin' && u.active).length);

  ngOnInit(): void {
    this.loadUsers();
  }

  protected loadUsers(): void {
    this.loading.set(true);
    this.loadError.set(null);
    this.api.list().pipe(takeUntilDestroyed(this.destroyRef)).subscribe({
      next: (users) => {
        this.users.set(users);
        this.loading.set(false);
      },
      error: (err: unknown) => {
        this.loading.set(false);
        this.loadError.set(apiErrorMessage(err, 'The users could not be loaded.'));
      },
    });
  }

  protected search(value: string): void {
    this.query.set(value);
    this.pageIndex.set(0);
  }

  protected changePage(event: PageEvent): void {
    this.pageIndex.set(event.pageIndex);
    this.pageSize.set(event.pageSize);
  }

  protected isLastAdmin(user: UserRow): boolean {
    return user.role === 'admin' && user.active && this.activeAdmins() <= 1;
  }

  protected openInvite(): void {
    this.dialog
      .open(InviteDialog, { width: '460px' })
      .afterClosed()
      .pipe(filter((email): email is string => !!email))
      .subscribe((email) => {
        this.snackBar.open(`Invitation sent to ${email}; they are listed as invited until they set their password.`, 'OK', { duration: 6000 });
        this.loadUsers();
      });
  }

  protected openNewUser(): void {
    this.dialog
      .open(NewUserDialog, { autoFocus: 'first-tabbable' })
      .afterClosed()
      .pipe(filter((u): u is UserRow => !!u))
      .subscribe((user) => {
        this.users.update((list) => [...list, user].sort((a, b) => a.name.localeCompare(b.name)));
        this.snackBar.open(`${user.name} can now sign in as ${ROLE_LABELS[user.role].toLowerCase()}.`, 'OK', { duration: 5000 });
      });
  }

  protected changeRole(user: UserRow, role: Role): void {
    if (role === user.role) return;
    const previous = user.role;
    this.applyChange(user, { role }, `${user.name} is now ${ROLE_LABELS[role].toLowerCase()}.`, () => ({ role: previous }));
  }

  protected toggleActive(user: UserRow): void {
    if (!user.active) {
      this.applyChange(user, { active: true }, `${user.name} can sign in again.`);
      return;
    }
    const data: ConfirmData = {
      title: `Deactivate ${user.name}?`,
      message: `${user.email} will be signed out at once and can no longer sign in. Their registrations, results and history stay. You can reactivate the account later.`,
      confirm: 'Deactivate',
      danger: true,
    };
    this.dialog
      .open(ConfirmDialog, { data })
      .afterClosed()
      .pipe(filter(Boolean))
      .subscribe(() => this.applyChange(user, { active: false }, `${user.name} is deactivated.`));
  }

  private applyChange(user: UserRow, change: UserChange, done: string, undo?: () => UserChange): void {
    this.api.update(user.id, { ...change, version: user.version }).subscribe({
      next: (updated) => {
        this.replace(updated);
        const ref = this.snackBar.open(done, undo ? 'Undo' : 'OK', { duration: 6000 });
        if (undo) {
          ref
            .onAction()
            .pipe(switchMap(() => this.api.update(updated.id, { ...undo(), version: updated.version })))
            .subscribe({
              next: (restored) => this.replace(restored),
              error: (err: unknown) => this.snackBar.open(apiErrorMessage(err), 'OK'),
            });
        }
      },
      error: (err: unknown) => {
        this.snackBar.open(apiErrorMessage(err), 'OK', { duration: 8000 });
        this.loadUsers();
      },
    });
  }

  private replace(updated: UserRow): void {
    this.users.update((list) => list.map((u) => (u.id === updated.id ? updated : u)));
  }
}
