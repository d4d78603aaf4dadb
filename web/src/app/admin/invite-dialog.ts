import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { ROLE_LABELS, ROLES, type Role } from '../auth/roles';
import { apiErrorMessage, apiFieldProblems } from '../shared/api-error';
import { UserApi } from './user-api';

/** Invite a colleague by e-mail: the link sets their first password and expires. */
@Component({
  selector: 'lg-invite-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, MatSelectModule],
  template: `
    <h2 mat-dialog-title>Invite by e-mail</h2>
    <form [formGroup]="form" (ngSubmit)="send()">
      <mat-dialog-content>
        <p class="hint">They get a link to set their own password; it works once and expires. Nobody else sees the password.</p>
        <mat-form-field appearance="outline" class="wide">
          <mat-label>Name</mat-label>
          <input matInput formControlName="name" maxlength="120" cdkFocusInitial />
          @if (form.controls.name.hasError('required')) { <mat-error>Give their name.</mat-error> }
        </mat-form-field>
        <mat-form-field appearance="outline" class="wide">
          <mat-label>E-mail</mat-label>
          <input matInput type="email" formControlName="email" maxlength="254" />
          @if (form.controls.email.hasError('required')) { <mat-error>Give their e-mail address.</mat-error> }
          @if (form.controls.email.hasError('email')) { <mat-error>This is not an e-mail address.</mat-error> }
        </mat-form-field>
        <mat-form-field appearance="outline" class="wide">
          <mat-label>Role</mat-label>
          <mat-select formControlName="role">
            @for (r of roles; track r) {
              <mat-option [value]="r">{{ labels[r] }}</mat-option>
            }
          </mat-select>
        </mat-form-field>
        @if (error()) {
          <p class="lg-error" role="alert">{{ error() }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button mat-button type="button" mat-dialog-close>Cancel</button>
        <button mat-flat-button type="submit" [disabled]="sending()">Send the invitation</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    .wide { width: 100%; }
    .hint { color: var(--mat-sys-on-surface-variant); font-size: 13px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class InviteDialog {
  private readonly api = inject(UserApi);
  private readonly ref = inject(MatDialogRef<InviteDialog, string>);
  protected readonly roles = ROLES;
  protected readonly labels = ROLE_LABELS;
  protected readonly sending = signal(false);
  protected readonly error = signal<string | null>(null);
  protected readonly form = new FormGroup({
    name: new FormControl('', { nonNullable: true, validators: [Validators.required, Validators.maxLength(120)] }),
    email: new FormControl('', { nonNullable: true, validators: [Validators.required, Validators.email] }),
    role: new FormControl<Role>('viewer', { nonNullable: true }),
  });

  protected send(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.sending.set(true);
    this.error.set(null);
    const v = this.form.getRawValue();
    this.api.invite({ name: v.name.trim(), email: v.email.trim(), role: v.role }).subscribe({
      next: () => this.ref.close(v.email.trim()),
      error: (err) => {
        this.sending.set(false);
        const problems = apiFieldProblems(err);
        this.error.set(problems.length ? problems.map((p) => `${p.field}: ${p.message}`).join('; ') : apiErrorMessage(err));
      },
    });
  }
}
