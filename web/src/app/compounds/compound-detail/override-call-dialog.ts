import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { LIGAND_CALLS, MechanismApi, type LigandCall, type LigandCallName } from '../../assays/mechanism-api';
import { apiErrorCode, apiErrorMessage } from '../../shared/api-error';

export interface OverrideCallData {
  call: LigandCall;
}

/** A pharmacologist replaces a computed call with their own, giving a reason (audited). */
@Component({
  selector: 'lg-override-call-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, MatSelectModule],
  template: `
    <h2 mat-dialog-title>Override the call at {{ data.call.target.name }}</h2>
    <form [formGroup]="form" (ngSubmit)="save()">
      <mat-dialog-content>
        <p class="lead">
          The rule computes <strong>{{ data.call.computedCall }}</strong> for {{ data.call.compound.registryNumber }} from its approved results.
          Your call replaces it until you go back to the rule; the reason is kept in the audit trail, and later results that contradict it are flagged.
        </p>
        <mat-form-field appearance="outline" class="full">
          <mat-label>Call</mat-label>
          <mat-select formControlName="call">
            @for (c of calls; track c) {
              <mat-option [value]="c">{{ c }}</mat-option>
            }
          </mat-select>
        </mat-form-field>
        <mat-form-field appearance="outline" class="full">
          <mat-label>Reason</mat-label>
          <textarea matInput formControlName="reason" rows="3" required placeholder="What the rule does not see, e.g. no agonism in native tissue (notebook PH-12)"></textarea>
          <mat-hint>Required: at least 3 characters.</mat-hint>
          @if (form.controls.reason.touched && form.controls.reason.invalid) {
            <mat-error>Say why the computed call is overridden (at least 3 characters).</mat-error>
          }
        </mat-form-field>
        @if (error(); as message) {
          <p class="lg-error-text" role="alert">{{ message }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button mat-button type="button" mat-dialog-close>Cancel</button>
        <button mat-flat-button type="submit" [disabled]="busy()">Save the override</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    .lead { margin: 0 0 16px; color: var(--mat-sys-on-surface-variant); }
    .full { width: 100%; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class OverrideCallDialog {
  private readonly api = inject(MechanismApi);
  private readonly ref = inject<MatDialogRef<OverrideCallDialog, LigandCall>>(MatDialogRef);
  protected readonly data = inject<OverrideCallData>(MAT_DIALOG_DATA);
  private readonly fb = inject(FormBuilder);

  protected readonly calls = LIGAND_CALLS;
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);
  protected readonly form = this.fb.nonNullable.group({
    call: [this.data.call.call as LigandCallName, Validators.required],
    reason: [this.data.call.source === 'manual' ? (this.data.call.override?.reason ?? '') : '', [Validators.required, Validators.minLength(3), Validators.maxLength(2000), (c: { value: string }) => (c.value.trim().length >= 3 ? null : { blank: true })]],
  });

  protected save(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const { call, reason } = this.form.getRawValue();
    this.busy.set(true);
    this.error.set(null);
    this.api.overrideCall(this.data.call.id, call, reason, this.data.call.version).subscribe({
      next: (updated) => this.ref.close(updated),
      error: (err: unknown) => {
        this.busy.set(false);
        this.error.set(apiErrorCode(err) === 'stale_version' ? 'Someone changed this call meanwhile; close this dialog and reload the page.' : apiErrorMessage(err, 'The override could not be saved.'));
      },
    });
  }
}
