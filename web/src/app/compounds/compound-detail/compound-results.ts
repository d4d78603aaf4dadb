import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { AssayApi, type ResultValue, type ValueKey } from '../../assays/assay-api';
import { KIND_SHORT, VALUE_LABELS } from '../../assays/assay-labels';
import { StatusChip } from '../../assays/status-chip';
import { apiErrorMessage } from '../../shared/api-error';

const SHOWN: ValueKey[] = ['pKi', 'pKB', 'pA2', 'pIC50', 'pEC50', 'emax', 'alpha', 'logTauKA', 'foldShift'];
/** Short labels for the mechanism values in this one-line summary. */
const SHORT: Partial<Record<ValueKey, string>> = { pA2: 'pA2', logTauKA: 'log(τ/KA)', foldShift: 'fold-shift' };

function show(key: ValueKey, v: ResultValue): string {
  const q = v.qualifier === '=' ? '' : `${v.qualifier} `;
  const value = key === 'emax' ? `${v.value.toFixed(0)} %` : key === 'foldShift' ? `${v.value.toFixed(2)}×` : v.value.toFixed(2).replace(/^-/, '−');
  return `${SHORT[key] ?? VALUE_LABELS[key]} ${q}${value}`;
}

/** Every result of a compound across receptors and assays, with its status and run. */
@Component({
  selector: 'lg-compound-results',
  imports: [MatProgressBarModule, RouterLink, StatusChip],
  template: `
    @if (results.isLoading()) {
      <mat-progress-bar mode="indeterminate" aria-label="Loading the results" />
    } @else if (results.error()) {
      <p class="lg-error-text" role="alert">{{ errorText() }}</p>
    } @else if (rows().length === 0) {
      <p class="empty">No assay results yet. Results appear here when a pharmacologist uploads a run or enters values for one of this compound's batches.</p>
    } @else {
      <table class="results" aria-label="Results of this compound">
        <thead>
          <tr><th scope="col">Receptor</th><th scope="col">Assay</th><th scope="col">Batch</th><th scope="col">Values</th><th scope="col">Status</th><th scope="col">Source</th></tr>
        </thead>
        <tbody>
          @for (r of rows(); track r.id) {
            <tr>
              <td>{{ r.target }}</td>
              <td><a [routerLink]="['/assays', r.assayId]">{{ r.assayCode }}</a> <span class="kind">{{ r.kind }}</span></td>
              <td>{{ r.batch }}</td>
              <td class="values">{{ r.values }}</td>
              <td><lg-status-chip [status]="r.status" /></td>
              <td>
                @if (r.runId) {
                  <a [routerLink]="['/assays/runs', r.runId]">run of {{ r.runDate }}</a>
                } @else {
                  entered by hand
                }
              </td>
            </tr>
          }
        </tbody>
      </table>
      <p class="caution">{{ caution() }}</p>
    }
  `,
  styles: `
    :host { display: block; }
    .results { border-collapse: collapse; width: 100%; font-variant-numeric: tabular-nums; }
    th, td { text-align: left; padding: 6px 12px 6px 0; border-bottom: 1px solid var(--mat-sys-outline-variant); vertical-align: baseline; }
    thead th { font: var(--mat-sys-label-medium); color: var(--mat-sys-on-surface-variant); }
    .kind { font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); margin-left: 4px; }
    .values { white-space: nowrap; }
    .empty, .caution { font: var(--mat-sys-body-medium); color: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundResults {
  private readonly api = inject(AssayApi);

  readonly registryNumber = input.required<string>();

  protected readonly results = rxResource({ params: () => this.registryNumber(), stream: ({ params }) => this.api.compoundResults(params) });
  protected readonly errorText = computed(() => apiErrorMessage(this.results.error(), 'The results could not be loaded.'));
  protected readonly caution = computed(() => this.results.value()?.caution ?? '');
  protected readonly rows = computed(() =>
    (this.results.value()?.items ?? [])
      .map((r) => ({
        id: r.id,
        target: r.assay.target.name,
        assayId: r.assay.id,
        assayCode: r.assay.code,
        kind: KIND_SHORT[r.assay.kind],
        batch: r.batch.batchNumber,
        values: SHOWN.filter((k) => r.values[k]).map((k) => show(k, r.values[k]!)).join(' · ') || 'no value (see the curve)',
        status: r.status,
        runId: r.runId,
        runDate: r.runDate ?? '',
      }))
      .sort((a, b) => a.target.localeCompare(b.target) || a.assayCode.localeCompare(b.assayCode)),
  );
}
