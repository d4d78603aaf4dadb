import { ChangeDetectionStrategy, Component, inject, OnInit, signal } from '@angular/core';
import { HttpClient, HttpParams } from '@angular/common/http';
import { RouterLink } from '@angular/router';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatButtonModule } from '@angular/material/button';
import { forkJoin, map } from 'rxjs';
import { CurveChart } from '../assays/curve-chart';
import { responseAxisLabel } from '../assays/assay-labels';
import type { Assay, Measurement, Result } from '../assays/assay-api';
import { apiErrorMessage } from '../shared/api-error';
import { SarApi, type CellResult, type SarCell, type SarParameter } from './sar-api';
import { cellNotes, cellText, DECIMALS, qualified } from './sar-format';

export interface CellResultsData {
  compoundId: number;
  registryNumber: string;
  column: string;
  heading: string;
  parameter: SarParameter;
  parameterLabel: string;
  cell: SarCell | null;
  includeSubmitted: boolean;
}

type WithCurve = CellResult & { points: Measurement[]; fit: Result['fit']; kind: Assay['kind'] };

/** The results behind one SAR cell, each with its concentration–response curve when it has one. */
@Component({
  selector: 'lg-cell-results-dialog',
  imports: [MatDialogModule, MatButtonModule, RouterLink, CurveChart],
  template: `
    <h2 mat-dialog-title>{{ data.registryNumber }} · {{ data.heading }}</h2>
    <mat-dialog-content>
      @if (data.cell; as c) {
        <p class="summary">Aggregate: <strong>{{ summary }}</strong>
          @for (note of notes; track note) { <span class="note">· {{ note }}</span> }
        </p>
      }
      @if (error()) {
        <p class="lg-error" role="alert">{{ error() }}</p>
      } @else if (items(); as list) {
        <div class="grid">
          @for (r of list; track r.id) {
            <section class="result" [attr.data-result]="r.id">
              <header>
                <strong>{{ valueOf(r) }}</strong>
                <span>{{ r.assay.code }} · {{ r.assay.readout }}</span>
                <span class="status" [class.submitted]="r.status === 'submitted'">{{ r.status }}</span>
              </header>
              @if (r.points.length) {
                <lg-curve-chart [points]="r.points" [fit]="r.fit" [yLabel]="yLabel(r.kind)" [height]="200" [compact]="true"
                  [label]="'Concentration–response curve, ' + r.assay.code" />
              } @else {
                <p class="manual">Entered by hand: no curve.</p>
              }
              <footer>
                @if (r.runId) {
                  <a [routerLink]="['/assays/runs', r.runId]" (click)="close()">Run of {{ r.runDate }}</a>
                } @else {
                  <span>no run</span>
                }
              </footer>
            </section>
          } @empty {
            <p>No results behind this cell.</p>
          }
        </div>
      } @else {
        <p>Loading the curves…</p>
      }
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button mat-button mat-dialog-close>Close</button>
    </mat-dialog-actions>
  `,
  styles: `
    .grid { display: grid; grid-template-columns: repeat(auto-fill, minmax(300px, 1fr)); gap: 12px; }
    .result { border: 1px solid var(--mat-sys-outline-variant); border-radius: 8px; padding: 8px 10px; }
    header { display: flex; gap: 10px; align-items: baseline; flex-wrap: wrap; margin-bottom: 4px; }
    .status { font-size: 12px; padding: 0 6px; border-radius: 8px; background: var(--mat-sys-secondary-container); }
    .status.submitted { background: var(--mat-sys-tertiary-container); }
    .summary .note { color: var(--mat-sys-on-surface-variant); font-size: 13px; }
    .manual { color: var(--mat-sys-on-surface-variant); }
    footer { font-size: 13px; margin-top: 4px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CellResultsDialog implements OnInit {
  protected readonly data = inject<CellResultsData>(MAT_DIALOG_DATA);
  private readonly sar = inject(SarApi);
  private readonly http = inject(HttpClient);
  protected readonly items = signal<WithCurve[] | null>(null);
  protected readonly error = signal<string | null>(null);
  protected readonly yLabel = responseAxisLabel;
  protected readonly summary = this.data.cell ? cellText(this.data.parameter, this.data.cell) : '';
  protected readonly notes = this.data.cell ? cellNotes(this.data.cell) : [];
  private readonly ref = inject(MatDialogRef<CellResultsDialog>);

  ngOnInit(): void {
    const params = new HttpParams().set('compound', this.data.registryNumber).set('points', 'true').set('limit', 500);
    forkJoin({
      cell: this.sar.cell(this.data.compoundId, this.data.column, this.data.includeSubmitted),
      curves: this.http.get<{ items: (Result & { assay: Assay; points?: Measurement[] })[] }>('/api/results', { params }).pipe(map((r) => r.items)),
    }).subscribe({
      next: ({ cell, curves }) => {
        const byId = new Map(curves.map((r) => [r.id, r]));
        this.items.set(
          cell.map((r) => ({ ...r, points: byId.get(r.id)?.points ?? [], fit: byId.get(r.id)?.fit ?? null, kind: (byId.get(r.id)?.assay.kind ?? r.assay.kind) as Assay['kind'] })),
        );
      },
      error: (err) => this.error.set(apiErrorMessage(err)),
    });
  }

  protected valueOf(r: CellResult): string {
    const v = r.values[this.data.parameter];
    return v ? `${this.data.parameterLabel} ${qualified(v.value, v.qualifier, DECIMALS[this.data.parameter])}` : '–';
  }

  protected close(): void {
    this.ref.close();
  }
}
