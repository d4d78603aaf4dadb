import { afterNextRender, ChangeDetectionStrategy, Component, inject, signal, viewChild } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { StructureEditor, type Drawn } from '../compounds/compound-register/structure-editor';
import { queryOf } from '../compounds/compound-list/structure-search';

/** Draw a substructure for the SAR filter in OpenChemLib's editor (query features allowed). */
@Component({
  selector: 'lg-substructure-dialog',
  imports: [MatDialogModule, MatButtonModule, StructureEditor],
  template: `
    <h2 mat-dialog-title>Draw a substructure</h2>
    <mat-dialog-content>
      <p>Only compounds that contain this fragment stay in the table; its atoms are highlighted in each structure.</p>
      <lg-structure-editor [fragment]="true" (drawn)="drawn.set($event)" />
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button mat-button type="button" mat-dialog-close>Cancel</button>
      <button mat-flat-button type="button" [disabled]="!drawn()" (click)="apply()">Filter by this fragment</button>
    </mat-dialog-actions>
  `,
  styles: `
    lg-structure-editor { width: min(720px, 80vw); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SubstructureDialog {
  protected readonly data = inject<{ initial: string | null }>(MAT_DIALOG_DATA);
  private readonly ref = inject(MatDialogRef<SubstructureDialog, string>);
  private readonly editor = viewChild.required(StructureEditor);
  protected readonly drawn = signal<Drawn | null>(null);

  constructor() {
    // The editor makes its canvas after its first render; show the current query after that.
    afterNextRender(() => setTimeout(() => this.data.initial && this.editor().show(this.data.initial)));
  }

  protected apply(): void {
    const d = this.drawn();
    if (!d) return;
    const q = queryOf(d);
    this.ref.close('smiles' in q ? q.smiles : q.molfile);
  }
}
