import { HttpClient } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, inject, signal, viewChild } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { DomSanitizer, type SafeHtml } from '@angular/platform-browser';
import { Molecule } from 'openchemlib';
import { StructureEditor, type Drawn } from '../compounds/compound-register/structure-editor';
import { apiErrorMessage } from '../shared/api-error';

export interface SeriesCoreData {
  series: { id: number; code: string; name: string; core: string | null }[];
}

/** The core drawn with its attachment points labelled R1, R2 … (mapped atoms, or placeholders in drawing order). */
function coreSvg(core: string, sanitizer: DomSanitizer): SafeHtml | null {
  try {
    const mol = core.trim().includes('\n') ? Molecule.fromMolfile(core) : Molecule.fromSmiles(core.trim());
    const mapped = Array.from({ length: mol.getAllAtoms() }, (_, a) => mol.getAtomMapNo(a)).some((n) => n > 0);
    let drawn = 0;
    for (let a = 0; a < mol.getAllAtoms(); a++) {
      const n = mapped ? mol.getAtomMapNo(a) : mol.getAtomicNo(a) === 0 ? ++drawn : 0;
      if (n > 0) mol.setAtomCustomLabel(a, `R${n}`);
    }
    return sanitizer.bypassSecurityTrustHtml(mol.toSVG(260, 150, undefined, { autoCrop: true, autoCropMargin: 8, suppressChiralText: true }));
  } catch {
    return null;
  }
}

/** Set each series' core for R-group decomposition: type a SMILES with [*:1] … or draw with placeholder atoms. */
@Component({
  selector: 'lg-series-cores-dialog',
  imports: [FormsModule, MatDialogModule, MatButtonModule, MatFormFieldModule, MatInputModule, StructureEditor],
  template: `
    <h2 mat-dialog-title>Series cores for R-groups</h2>
    <mat-dialog-content>
      <p class="hint">
        Mark each attachment point as <code>[*:1]</code>, <code>[*:2]</code> … in a SMILES, or draw the core with “any atom” (?) placeholders:
        they become R1, R2 … in the order you drew them. Every member is decomposed again against the new core.
      </p>
      @for (s of data.series; track s.id) {
        <section class="series" [attr.aria-label]="'Series ' + s.code">
          <header>
            <strong>{{ s.code }}</strong> {{ s.name }}
            @if (editing() !== s.id) {
              <button mat-stroked-button type="button" (click)="edit(s.id, s.core)">{{ s.core ? 'Change core' : 'Set a core' }}</button>
            }
          </header>
          @if (editing() === s.id) {
            <lg-structure-editor [fragment]="true" (drawn)="fromDrawing($event)" />
            <mat-form-field appearance="outline" class="wide" subscriptSizing="dynamic">
              <mat-label>Core (SMILES with [*:1] … or the drawing's molfile)</mat-label>
              <textarea matInput rows="2" [ngModel]="draft()" (ngModelChange)="draft.set($event)" name="core" spellcheck="false"></textarea>
            </mat-form-field>
            @if (preview(); as svg) {
              <div class="svg" [innerHTML]="svg" role="img" aria-label="Core preview with attachment points"></div>
            }
            @if (error()) {
              <p class="lg-error" role="alert">{{ error() }}</p>
            }
            <div class="actions">
              <button mat-flat-button type="button" (click)="save(s.id)" [disabled]="saving()">Save core</button>
              <button mat-button type="button" (click)="save(s.id, true)" [disabled]="saving() || !s.core">Remove the core</button>
              <button mat-button type="button" (click)="editing.set(null)">Cancel</button>
            </div>
          } @else if (s.core) {
            <div class="svg" [innerHTML]="svgOf(s.core)" role="img" [attr.aria-label]="'Core of ' + s.code"></div>
          } @else {
            <p class="hint">No core: the table shows no R-group columns for this series.</p>
          }
        </section>
      }
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button mat-button type="button" [mat-dialog-close]="changed()">Close</button>
    </mat-dialog-actions>
  `,
  styles: `
    .series { border-top: 1px solid var(--mat-sys-outline-variant); padding: 8px 0; }
    header { display: flex; align-items: center; gap: 10px; }
    .svg { display: inline-flex; width: 260px; height: 150px; }
    .svg ::ng-deep svg { max-width: 100%; max-height: 100%; }
    .wide { width: 100%; margin-top: 8px; }
    .hint { color: var(--mat-sys-on-surface-variant); font-size: 13px; }
    .actions { display: flex; gap: 8px; }
    lg-structure-editor { width: min(680px, 80vw); height: 300px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SeriesCoresDialog {
  protected readonly data = inject<SeriesCoreData>(MAT_DIALOG_DATA);
  private readonly http = inject(HttpClient);
  private readonly sanitizer = inject(DomSanitizer);
  private readonly ref = inject(MatDialogRef<SeriesCoresDialog, boolean>);
  private readonly editor = viewChild(StructureEditor);
  protected readonly editing = signal<number | null>(null);
  protected readonly draft = signal('');
  protected readonly error = signal<string | null>(null);
  protected readonly saving = signal(false);
  protected readonly changed = signal(false);
  protected readonly preview = computed(() => (this.draft().trim() ? coreSvg(this.draft(), this.sanitizer) : null));

  protected svgOf(core: string): SafeHtml | null {
    return coreSvg(core, this.sanitizer);
  }

  protected edit(id: number, core: string | null): void {
    this.editing.set(id);
    this.draft.set(core ?? '');
    this.error.set(null);
    // The editor makes its canvas after it renders; show the current core then.
    setTimeout(() => core && this.editor()?.show(core), 50);
  }

  protected fromDrawing(d: Drawn | null): void {
    this.draft.set(d ? d.molfile : '');
  }

  protected save(id: number, remove = false): void {
    this.saving.set(true);
    this.http.patch<{ core: string | null }>(`/api/series/${id}`, { core: remove ? null : this.draft() }).subscribe({
      next: (s) => {
        const entry = this.data.series.find((x) => x.id === id);
        if (entry) entry.core = s.core;
        this.saving.set(false);
        this.editing.set(null);
        this.changed.set(true);
      },
      error: (err) => {
        this.saving.set(false);
        this.error.set(apiErrorMessage(err));
      },
    });
  }
}
