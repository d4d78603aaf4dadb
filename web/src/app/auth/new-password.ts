import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators, type AbstractControl, type ValidationErrors } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { Router, RouterLink } from '@angular/router';
import type { Observable } from 'rxjs';
import { apiErrorMessage } from '../shared/api-error';
import { AccountApi } from './account-api';
import type { SignedInUser } from './auth-store';

const MIN_LENGTH = 12;

function sameAsPassword(control: AbstractControl): ValidationErrors | null {
  const form = control.parent;
  return form && control.value !== form.get('password')?.value ? { mismatch: true } : null;
}

/**
 * The page an e-mailed link opens: `/reset-password` (no token: ask for the link; with a token:
 * choose a new password) and `/accept-invitation?token=…` (choose the first password).
 */
@Component({
  selector: 'lg-new-password',
  imports: [ReactiveFormsModule, RouterLink, MatButtonModule, MatFormFieldModule, MatInputModule, MatProgressBarModule],
  templateUrl: './new-password.html',
  styleUrl: './login.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NewPassword {
  private readonly api = inject(AccountApi);
  private readonly router = inject(Router);
  private readonly fb = inject(FormBuilder).nonNullable;

  /** Route data: which link this page serves. */
  readonly mode = input<'reset' | 'invitation'>('reset');
  /** The secret from the e-mailed link (query parameter). */
  readonly token = input<string>();

  protected readonly minLength = MIN_LENGTH;
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);
  protected readonly sent = signal<string | null>(null);
  protected readonly asking = computed(() => this.mode() === 'reset' && !this.token());
  protected readonly title = computed(() => (this.mode() === 'invitation' ? 'Welcome to Ligandry' : this.asking() ? 'Forgot your password?' : 'Choose a new password'));

  protected readonly askForm = this.fb.group({ email: ['', [Validators.required, Validators.email]] });
  protected readonly passwordForm = this.fb.group({
    name: [''],
    password: ['', [Validators.required, Validators.minLength(MIN_LENGTH)]],
    repeat: ['', [Validators.required, sameAsPassword]],
  });

  protected sendLink(): void {
    if (this.askForm.invalid) {
      this.askForm.markAllAsTouched();
      return;
    }
    this.run(this.api.requestReset(this.askForm.getRawValue().email), (message) => this.sent.set(message));
  }

  protected savePassword(): void {
    this.passwordForm.controls.repeat.updateValueAndValidity();
    if (this.passwordForm.invalid) {
      this.passwordForm.markAllAsTouched();
      return;
    }
    const { name, password } = this.passwordForm.getRawValue();
    const token = this.token() ?? '';
    const call: Observable<SignedInUser> = this.mode() === 'invitation' ? this.api.acceptInvitation(token, password, name.trim() || undefined) : this.api.confirmReset(token, password);
    this.run(call, () => void this.router.navigateByUrl('/'));
  }

  private run<T>(call: Observable<T>, done: (value: T) => void): void {
    this.busy.set(true);
    this.error.set(null);
    call.subscribe({
      next: (value) => {
        this.busy.set(false);
        done(value);
      },
      error: (err: unknown) => {
        this.busy.set(false);
        this.error.set(apiErrorMessage(err, 'That did not work; try again.'));
      },
    });
  }
}
