import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { apiErrorMessage, apiFieldProblems } from '../../shared/api-error';
import { CompoundApi, type Batch, type BatchDraft, type BatchInput } from '../compound-api';

export interface AddBatchData {
  compound: { id: number; registryNumber: string; smiles: string };
  /** Values carried over from the register page ("add a batch instead"). */
  draft?: BatchDraft | null;
}

const FIELDS: Record<string, string> = { structure: 'structure', purity: 'purity', amountMg: 'amountMg', source: 'source', notebookRef: 'notebookRef' };

/** A new batch of a registered compound; a structure, when given, sets the batch's salt form. */
@Component({
  selector: 'lg-add-batch-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule],
  templateUrl: './add-batch-dialog.html',
  styles: `
    form { display: grid; grid-template-columns: 1fr 1fr; column-gap: 12px; padding-top: 4px; }
    .wide { grid-column: 1 / -1; }
    mat-form-field.wide { margin-bottom: 16px; }
    textarea { font-family: ui-monospace, 'DejaVu Sans Mono', monospace; font-size: 13px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AddBatchDialog {
  private readonly api = inject(CompoundApi);
  private readonly ref = inject<MatDialogRef<AddBatchDialog, Batch>>(MatDialogRef);
  protected readonly data = inject<AddBatchData>(MAT_DIALOG_DATA);

  protected readonly form = inject(FormBuilder).group({
    structure: [this.data.draft?.structure ?? ''],
    purity: [this.data.draft?.purity ?? (null as number | null), [Validators.min(0), Validators.max(100)]],
    amountMg: [this.data.draft?.amountMg ?? (null as number | null), Validators.min(0)],
    source: [this.data.draft?.source ?? '', Validators.maxLength(200)],
    notebookRef: [this.data.draft?.notebookRef ?? '', Validators.maxLength(100)],
  });
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);

  protected addBatch(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const v = this.form.getRawValue();
    const body: BatchInput & { structure?: string } = {};
    if (v.structure?.trim()) body.structure = v.structure;
    if (v.purity !== null && v.purity !== undefined) body.purity = v.purity;
    if (v.amountMg !== null && v.amountMg !== undefined) body.amountMg = v.amountMg;
    if (v.source?.trim()) body.source = v.source.trim();
    if (v.notebookRef?.trim()) body.notebookRef = v.notebookRef.trim();
    this.busy.set(true);
    this.error.set(null);
    this.api.addBatch(this.data.compound.id, body).subscribe({
      next: (batch) => this.ref.close(batch),
      error: (err: unknown) => {
        this.busy.set(false);
        for (const problem of apiFieldProblems(err)) {
          const control = this.form.get(FIELDS[problem.field] ?? '');
          control?.setErrors({ server: problem.message });
          control?.markAsTouched();
        }
        this.error.set(apiErrorMessage(err, 'The batch could not be added.').replace(/^structure:\s*/, ''));
      },
    });
  }
}
