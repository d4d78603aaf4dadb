import { ChangeDetectionStrategy, Component, inject } from '@angular/core';
import { FormControl, FormGroup, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatSlideToggleModule } from '@angular/material/slide-toggle';

export interface SaveViewData {
  projectName: string;
  name: string;
  shared: boolean;
}

/** Name a view and choose who sees it. */
@Component({
  selector: 'lg-save-view-dialog',
  imports: [ReactiveFormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, MatSlideToggleModule],
  template: `
    <h2 mat-dialog-title>Save this view</h2>
    <form [formGroup]="form" (ngSubmit)="save()">
      <mat-dialog-content>
        <p>Keeps the series, receptors, parameters, substructure, text filter, column layout, sort and filters.</p>
        <mat-form-field appearance="outline" class="wide">
          <mat-label>Name</mat-label>
          <input matInput formControlName="name" maxlength="120" cdkFocusInitial />
          @if (form.controls.name.hasError('required')) {
            <mat-error>Give the view a name.</mat-error>
          }
        </mat-form-field>
        <mat-slide-toggle formControlName="shared">Share with everyone on {{ data.projectName }}</mat-slide-toggle>
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button mat-button type="button" mat-dialog-close>Cancel</button>
        <button mat-flat-button type="submit">Save view</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    .wide { width: 100%; margin-top: 8px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SaveViewDialog {
  protected readonly data = inject<SaveViewData>(MAT_DIALOG_DATA);
  private readonly ref = inject(MatDialogRef<SaveViewDialog, { name: string; shared: boolean }>);
  protected readonly form = new FormGroup({
    name: new FormControl(this.data.name, { nonNullable: true, validators: [Validators.required, Validators.maxLength(120)] }),
    shared: new FormControl(this.data.shared, { nonNullable: true }),
  });

  protected save(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.ref.close({ name: this.form.controls.name.value.trim(), shared: this.form.controls.shared.value });
  }
}
