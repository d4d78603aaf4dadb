import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { apiErrorMessage, apiFieldProblems } from '../../shared/api-error';
import { AssayApi, TARGET_FAMILIES, type Target, type TargetFamily } from '../assay-api';

/** A receptor added to the panel. */
@Component({
  selector: 'lg-new-target-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, MatSelectModule],
  template: `
    <h2 mat-dialog-title>Add a receptor to the panel</h2>
    <mat-dialog-content>
      <form [formGroup]="form" id="new-target-form" (ngSubmit)="addTarget()" novalidate>
        <mat-form-field appearance="outline" class="wide">
          <mat-label>Name</mat-label>
          <input matInput formControlName="name" autocomplete="off" placeholder="e.g. 5-HT1A receptor" />
          @if (form.controls.name.hasError('required')) { <mat-error>Enter the receptor's name</mat-error> }
          @else if (form.controls.name.hasError('server')) { <mat-error>{{ form.controls.name.getError('server') }}</mat-error> }
        </mat-form-field>
        <mat-form-field appearance="outline">
          <mat-label>Gene symbol</mat-label>
          <input matInput formControlName="geneSymbol" autocomplete="off" placeholder="e.g. HTR1A" />
          @if (form.controls.geneSymbol.hasError('required')) { <mat-error>Enter the gene symbol</mat-error> }
          @else if (form.controls.geneSymbol.hasError('server')) { <mat-error>{{ form.controls.geneSymbol.getError('server') }}</mat-error> }
        </mat-form-field>
        <mat-form-field appearance="outline">
          <mat-label>Family</mat-label>
          <mat-select formControlName="family">
            @for (f of families; track f) { <mat-option [value]="f">{{ f }}</mat-option> }
          </mat-select>
        </mat-form-field>
        <mat-form-field appearance="outline">
          <mat-label>Species</mat-label>
          <input matInput formControlName="species" autocomplete="off" />
          @if (form.controls.species.hasError('required')) { <mat-error>Enter the species</mat-error> }
          @else if (form.controls.species.hasError('server')) { <mat-error>{{ form.controls.species.getError('server') }}</mat-error> }
        </mat-form-field>
        <mat-form-field appearance="outline" class="wide">
          <mat-label>Description (optional)</mat-label>
          <textarea matInput formControlName="description" rows="2"></textarea>
        </mat-form-field>
        @if (error(); as message) {
          <p class="lg-error-text wide" role="alert">{{ message }}</p>
        }
      </form>
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button mat-button type="button" mat-dialog-close>Cancel</button>
      <button mat-flat-button type="submit" form="new-target-form" [disabled]="busy()">Add receptor</button>
    </mat-dialog-actions>
  `,
  styles: `
    form { display: grid; grid-template-columns: 1fr 1fr; column-gap: 12px; padding-top: 4px; }
    .wide { grid-column: 1 / -1; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class NewTargetDialog {
  private readonly api = inject(AssayApi);
  private readonly ref = inject<MatDialogRef<NewTargetDialog, Target>>(MatDialogRef);

  protected readonly families = TARGET_FAMILIES;
  protected readonly form = inject(FormBuilder).nonNullable.group({
    name: ['', [Validators.required, Validators.maxLength(120)]],
    geneSymbol: ['', [Validators.required, Validators.maxLength(30)]],
    family: ['GPCR' as TargetFamily, Validators.required],
    species: ['human', [Validators.required, Validators.maxLength(60)]],
    description: ['', Validators.maxLength(4000)],
  });
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);

  protected addTarget(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const v = this.form.getRawValue();
    this.busy.set(true);
    this.error.set(null);
    this.api.createTarget({ ...v, name: v.name.trim(), geneSymbol: v.geneSymbol.trim(), species: v.species.trim(), description: v.description.trim() || null }).subscribe({
      next: (target) => this.ref.close(target),
      error: (err: unknown) => {
        this.busy.set(false);
        for (const problem of apiFieldProblems(err)) {
          const control = this.form.get(problem.field);
          control?.setErrors({ server: problem.message });
          control?.markAsTouched();
        }
        this.error.set(apiErrorMessage(err, 'The receptor could not be added.'));
      },
    });
  }
}
