import { ChangeDetectionStrategy, Component, inject } from '@angular/core';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';

export interface DecisionData {
  decision: 'approve' | 'reject';
  /** "CPD-000003-01 in HTR1A-BIND". */
  subject: string;
}

/** Approve (optional comment) or reject (comment required) one submitted result; either is final. */
@Component({
  selector: 'lg-decision-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule],
  template: `
    <h2 mat-dialog-title>{{ reject ? 'Reject' : 'Approve' }} {{ data.subject }}?</h2>
    <mat-dialog-content>
      <form id="decision-form" [formGroup]="form" (ngSubmit)="decide()" novalidate>
        <p class="final">
          @if (reject) {
            The submitter gets an e-mail with your comment and can adjust the fit and submit again. The rejection itself is final and cannot be undone.
          } @else {
            The values become the approved result for this compound. Decisions are final: an approved result cannot be changed back.
          }
        </p>
        <mat-form-field appearance="outline">
          <mat-label>{{ reject ? 'Why is it rejected?' : 'Comment (optional)' }}</mat-label>
          <textarea matInput formControlName="comment" rows="3" cdkFocusInitial></textarea>
          @if (comment.hasError('required')) { <mat-error>Say why, so the pharmacologist can act on it</mat-error> }
        </mat-form-field>
      </form>
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button mat-button type="button" mat-dialog-close>Cancel</button>
      <button mat-flat-button type="submit" form="decision-form" [class.danger]="reject">{{ reject ? 'Reject' : 'Approve' }}</button>
    </mat-dialog-actions>
  `,
  styles: `
    form { display: flex; flex-direction: column; min-width: min(460px, 80vw); }
    .final { margin: 0 0 12px; }
    .danger {
      --mat-button-filled-container-color: var(--mat-sys-error);
      --mat-button-filled-label-text-color: var(--mat-sys-on-error);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class DecisionDialog {
  private readonly ref = inject<MatDialogRef<DecisionDialog, { comment: string }>>(MatDialogRef);
  protected readonly data = inject<DecisionData>(MAT_DIALOG_DATA);
  protected readonly reject = this.data.decision === 'reject';
  protected readonly comment = new FormControl('', { nonNullable: true, validators: this.reject ? [Validators.required, Validators.maxLength(4000)] : [Validators.maxLength(4000)] });
  protected readonly form = new FormGroup({ comment: this.comment });

  protected decide(): void {
    if (this.reject && !this.comment.value.trim()) this.comment.setValue('');
    if (this.comment.invalid) {
      this.comment.markAsTouched();
      return;
    }
    this.ref.close({ comment: this.comment.value.trim() });
  }
}
