import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { takeUntilDestroyed, toSignal } from '@angular/core/rxjs-interop';
import { map } from 'rxjs';
import { FormBuilder, ReactiveFormsModule, Validators, type AbstractControl } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { apiErrorMessage, apiFieldProblems } from '../../shared/api-error';
import { ASSAY_KINDS, AssayApi, type Assay, type AssayKind, type NewAssay, type Target } from '../assay-api';
import { fromNanomolar, KIND_HINTS, KIND_LABELS } from '../assay-labels';

export interface NewAssayData {
  targets: Target[];
  targetId: number | null;
}

/** API field → form control (concentrations are entered in nM). */
const FIELDS: Record<string, string> = {
  radioligandConcM: 'radioligandConcNm',
  radioligandKdM: 'radioligandKdNm',
  agonistConcM: 'agonistConcNm',
  agonistEc50M: 'agonistEc50Nm',
};

const READOUT_EXAMPLES: Record<AssayKind, string> = {
  binding: 'e.g. Radioligand displacement, scintillation counts',
  'functional-agonist': 'e.g. cAMP accumulation (HTRF ratio)',
  'functional-antagonist': 'e.g. Calcium flux (fluorescence)',
  'allosteric-modulation': 'e.g. IP1 accumulation (HTRF ratio)',
};

const positive = [Validators.min(0), Validators.max(1e9)];

/** A new assay protocol; the fields its computations need change with its kind. */
@Component({
  selector: 'lg-new-assay-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatCheckboxModule, MatFormFieldModule, MatInputModule, MatSelectModule],
  templateUrl: './new-assay-dialog.html',
  styles: `
    form { display: grid; grid-template-columns: 1fr 1fr; column-gap: 12px; padding-top: 4px; }
    .wide { grid-column: 1 / -1; }
    .section { grid-column: 1 / -1; margin: 4px 0 8px; font: var(--mat-sys-title-small); }
    .hint { grid-column: 1 / -1; margin: 6px 0 12px; font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
    mat-checkbox { grid-column: 1 / -1; margin-bottom: 12px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NewAssayDialog {
  private readonly api = inject(AssayApi);
  private readonly ref = inject<MatDialogRef<NewAssayDialog, Assay>>(MatDialogRef);
  protected readonly data = inject<NewAssayData>(MAT_DIALOG_DATA);

  protected readonly kinds = ASSAY_KINDS.map((k) => ({ value: k, label: KIND_LABELS[k] }));
  protected readonly hints = KIND_HINTS;
  protected readonly readoutExamples = READOUT_EXAMPLES;
  private readonly initialTarget = this.data.targets.find((t) => t.id === this.data.targetId) ?? null;

  protected readonly form = inject(FormBuilder).group({
    code: ['', [Validators.required, Validators.pattern(/^[A-Za-z0-9-]{1,30}$/)]],
    name: ['', [Validators.required, Validators.maxLength(160)]],
    targetId: [this.initialTarget?.id ?? null, Validators.required],
    kind: ['binding' as AssayKind, Validators.required],
    readout: ['', [Validators.required, Validators.maxLength(80)]],
    species: [this.initialTarget?.species ?? 'human', [Validators.required, Validators.maxLength(60)]],
    cellSystem: ['', Validators.maxLength(160)],
    radioligand: ['', Validators.maxLength(120)],
    radioligandConcNm: [null as number | null, positive],
    radioligandKdNm: [null as number | null, positive],
    referenceCompound: ['', Validators.maxLength(40)],
    constitutiveActivity: [false],
    agonistConcNm: [null as number | null, positive],
    agonistEc50Nm: [null as number | null, positive],
    agonistHill: [null as number | null, [Validators.min(0.1), Validators.max(10)]],
    description: ['', Validators.maxLength(4000)],
  });
  protected readonly kind = toSignal(this.form.controls.kind.valueChanges.pipe(map((k) => k ?? 'binding')), { initialValue: 'binding' as AssayKind });
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);

  constructor() {
    this.requireForKind('binding');
    this.form.controls.kind.valueChanges.pipe(takeUntilDestroyed()).subscribe((kind) => kind && this.requireForKind(kind));
    this.form.controls.targetId.valueChanges.pipe(takeUntilDestroyed()).subscribe((id) => {
      const target = this.data.targets.find((t) => t.id === id);
      if (target && !this.form.controls.species.dirty) this.form.controls.species.setValue(target.species);
    });
  }

  /** The fields a kind's computations need become required (the server checks the same). */
  private requireForKind(kind: AssayKind): void {
    const c = this.form.controls;
    const required: Record<string, boolean> = {
      radioligandConcNm: kind === 'binding',
      radioligandKdNm: kind === 'binding',
      referenceCompound: kind === 'functional-agonist' || kind === 'allosteric-modulation',
      agonistConcNm: kind === 'functional-antagonist' || kind === 'allosteric-modulation',
      agonistEc50Nm: kind === 'functional-antagonist',
    };
    for (const [name, needed] of Object.entries(required)) {
      const control = c[name as keyof typeof c] as AbstractControl;
      if (needed) control.addValidators(Validators.required);
      else control.removeValidators(Validators.required);
      control.updateValueAndValidity({ emitEvent: false });
    }
  }

  protected createAssay(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const v = this.form.getRawValue();
    const kind = v.kind!;
    const text = (s: string | null | undefined) => s?.trim() || null;
    const body: NewAssay = {
      code: v.code!.trim().toUpperCase(),
      name: v.name!.trim(),
      targetId: v.targetId!,
      kind,
      readout: v.readout!.trim(),
      species: v.species!.trim(),
      cellSystem: text(v.cellSystem),
      description: text(v.description),
    };
    if (kind === 'binding') {
      body.radioligand = text(v.radioligand);
      body.radioligandConcM = fromNanomolar(v.radioligandConcNm);
      body.radioligandKdM = fromNanomolar(v.radioligandKdNm);
    } else {
      body.referenceCompound = text(v.referenceCompound)?.toUpperCase() ?? null;
      body.constitutiveActivity = kind !== 'functional-antagonist' && !!v.constitutiveActivity;
    }
    if (kind === 'functional-antagonist' || kind === 'allosteric-modulation') {
      body.agonistConcM = fromNanomolar(v.agonistConcNm);
      body.agonistEc50M = fromNanomolar(v.agonistEc50Nm);
      body.agonistHill = v.agonistHill ?? null;
    }
    this.busy.set(true);
    this.error.set(null);
    this.api.createAssay(body).subscribe({
      next: (assay) => this.ref.close(assay),
      error: (err: unknown) => {
        this.busy.set(false);
        for (const problem of apiFieldProblems(err)) {
          const control = this.form.get(FIELDS[problem.field] ?? problem.field);
          control?.setErrors({ server: problem.message });
          control?.markAsTouched();
        }
        this.error.set(apiErrorMessage(err, 'The assay could not be created.'));
      },
    });
  }
}
