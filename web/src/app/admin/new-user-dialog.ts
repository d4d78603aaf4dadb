import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { ROLE_LABELS, ROLES, type Role } from '../auth/roles';
import { apiErrorMessage, apiFieldProblems } from '../shared/api-error';
import { UserApi, type UserRow } from './user-api';

@Component({
  selector: 'lg-new-user-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, MatSelectModule],
  templateUrl: './new-user-dialog.html',
  styles: `
    form { display: flex; flex-direction: column; gap: 4px; min-width: min(420px, 80vw); padding-top: 4px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NewUserDialog {
  private readonly api = inject(UserApi);
  private readonly ref = inject<MatDialogRef<NewUserDialog, UserRow>>(MatDialogRef);

  protected readonly roles = ROLES.map((r) => ({ value: r, label: ROLE_LABELS[r] }));
  protected readonly form = inject(FormBuilder).nonNullable.group({
    name: ['', [Validators.required, Validators.maxLength(120)]],
    email: ['', [Validators.required, Validators.email]],
    role: ['viewer' as Role, Validators.required],
    password: ['', [Validators.required, Validators.minLength(12)]],
  });
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);

  protected createUser(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.busy.set(true);
    this.error.set(null);
    this.api.create(this.form.getRawValue()).subscribe({
      next: (user) => this.ref.close(user),
      error: (err: unknown) => {
        this.busy.set(false);
        for (const problem of apiFieldProblems(err)) {
          this.form.get(problem.field)?.setErrors({ server: problem.message });
        }
        this.error.set(apiErrorMessage(err));
      },
    });
  }
}
