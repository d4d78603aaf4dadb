import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators, type AbstractControl, type ValidationErrors } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { apiErrorMessage, apiFieldProblems } from '../../shared/api-error';
import { AssayApi, type Assay, type AssayKind, type ManualEntry, type Qualifier, type Result } from '../assay-api';

type ParamKey = keyof ManualEntry['values'];

interface Param {
  key: ParamKey;
  label: string;
  unit: string;
  min: number;
  max: number;
  hint: string;
}

const PARAMS: Record<ParamKey, Param> = {
  pKi: { key: 'pKi', label: 'pKi', unit: '', min: 2, max: 14, hint: '−log10 Ki (M), 2 to 14' },
  pKB: { key: 'pKB', label: 'pKB', unit: '', min: 2, max: 14, hint: '−log10 KB (M), 2 to 14' },
  pIC50: { key: 'pIC50', label: 'pIC50', unit: '', min: 2, max: 14, hint: '−log10 IC50 (M), 2 to 14' },
  pEC50: { key: 'pEC50', label: 'pEC50', unit: '', min: 2, max: 14, hint: '−log10 EC50 (M), 2 to 14' },
  emax: { key: 'emax', label: 'Emax', unit: '%', min: -200, max: 300, hint: '% of the reference, −200 to 300' },
  alpha: { key: 'alpha', label: 'α (intrinsic activity)', unit: '', min: -2, max: 3, hint: 'Emax / Emax of the reference, −2 to 3' },
  hillSlope: { key: 'hillSlope', label: 'Hill slope', unit: '', min: -10, max: 10, hint: '−10 to 10' },
};

const BY_KIND: Record<AssayKind, ParamKey[]> = {
  binding: ['pKi', 'pIC50', 'hillSlope'],
  'functional-agonist': ['pEC50', 'emax', 'alpha', 'hillSlope'],
  'functional-antagonist': ['pKB', 'pIC50', 'hillSlope'],
  'allosteric-modulation': ['pEC50', 'emax', 'alpha', 'hillSlope'],
};

/** At least one value must be entered. */
function someValue(group: AbstractControl): ValidationErrors | null {
  const values = group.value as Record<string, { value: number | null }>;
  return Object.values(values).some((v) => v.value !== null && v.value !== undefined) ? null : { noValue: true };
}

/** Values measured outside Ligandry (a CRO, a paper), entered by hand as a draft result. */
@Component({
  selector: 'lg-manual-entry-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, MatSelectModule],
  templateUrl: './manual-entry-dialog.html',
  styles: `
    form { display: flex; flex-direction: column; padding-top: 4px; }
    .lead { margin: 0 0 12px; color: var(--mat-sys-on-surface-variant); }
    .grid { display: grid; grid-template-columns: 150px 90px 1fr 110px 90px; column-gap: 8px; align-items: start; margin-top: 16px; }
    .param { padding-top: 16px; font: var(--mat-sys-label-large); }
    .param small { display: block; font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
    .head { font: var(--mat-sys-label-small); color: var(--mat-sys-on-surface-variant); padding-bottom: 4px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ManualEntryDialog {
  private readonly api = inject(AssayApi);
  private readonly ref = inject<MatDialogRef<ManualEntryDialog, Result>>(MatDialogRef);
  protected readonly data = inject<{ assay: Assay }>(MAT_DIALOG_DATA);
  private readonly fb = inject(FormBuilder);

  protected readonly params = BY_KIND[this.data.assay.kind].map((k) => PARAMS[k]);
  protected readonly qualifiers: { value: Qualifier; label: string }[] = [
    { value: '=', label: '=' },
    { value: '<', label: '<' },
    { value: '>', label: '>' },
  ];

  protected readonly form = this.fb.group({
    sample: ['', [Validators.required, Validators.maxLength(40)]],
    values: this.fb.group(
      Object.fromEntries(
        this.params.map((p) => [
          p.key,
          this.fb.group({
            qualifier: ['=' as Qualifier],
            value: [null as number | null, [Validators.min(p.min), Validators.max(p.max)]],
            sd: [null as number | null, Validators.min(0)],
            n: [null as number | null, [Validators.min(1), Validators.max(1000), Validators.pattern(/^\d+$/)]],
          }),
        ]),
      ),
      { validators: someValue },
    ),
    note: ['', [Validators.required, Validators.maxLength(2000)]],
  });
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);

  protected control(key: ParamKey, field: 'value' | 'sd' | 'n'): AbstractControl {
    return this.form.controls.values.get([key, field])!;
  }

  protected saveEntry(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      if (this.form.controls.values.hasError('noValue')) this.error.set('Enter at least one value.');
      return;
    }
    const v = this.form.getRawValue();
    const values: ManualEntry['values'] = {};
    for (const p of this.params) {
      const row = (v.values as Record<string, { qualifier: Qualifier; value: number | null; sd: number | null; n: number | null }>)[p.key];
      if (row.value === null || row.value === undefined) continue;
      values[p.key] = { value: row.value, qualifier: row.qualifier, sd: row.sd ?? null, n: row.n ?? null };
    }
    this.busy.set(true);
    this.error.set(null);
    this.api.enterManual({ assayId: this.data.assay.id, sample: v.sample!.trim().toUpperCase(), values, note: v.note!.trim() }).subscribe({
      next: (result) => this.ref.close(result),
      error: (err: unknown) => {
        this.busy.set(false);
        for (const problem of apiFieldProblems(err)) {
          const path = problem.field.replace(/^values\.(\w+)$/, 'values.$1.value');
          const control = this.form.get(path);
          control?.setErrors({ server: problem.message });
          control?.markAsTouched();
        }
        this.error.set(apiErrorMessage(err, 'The values could not be saved.'));
      },
    });
  }
}
