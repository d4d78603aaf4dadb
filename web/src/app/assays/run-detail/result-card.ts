import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, linkedSignal, output, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatExpansionModule } from '@angular/material/expansion';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSnackBar } from '@angular/material/snack-bar';
import { RouterLink } from '@angular/router';
import { apiErrorCode, apiErrorMessage } from '../../shared/api-error';
import { AssayApi, type Assay, type FixedParams, type Measurement, type Result } from '../assay-api';
import { formatMolar, responseAxisLabel } from '../assay-labels';
import { CurveChart } from '../curve-chart';
import { ResultValues } from '../result-values';
import { StatusChip } from '../status-chip';

export interface ResultChange {
  result: Result;
  exclude?: number[];
  include?: number[];
  /** True after a refit (α of the run's other drafts may follow a refitted reference). */
  refitted?: boolean;
}

type FixedName = keyof FixedParams;

/** The fixed-parameter inputs as typed (empty = free). */
function fixedText(fixed: FixedParams | null | undefined, name: FixedName): string {
  const v = fixed?.[name];
  return v === undefined || v === null ? '' : String(v);
}

/** One curve of a run: chart, values, flags and, for drafts, the points and parameters to adjust. */
@Component({
  selector: 'lg-result-card',
  imports: [DatePipe, RouterLink, MatButtonModule, MatCheckboxModule, MatExpansionModule, MatFormFieldModule, MatIconModule, MatInputModule, CurveChart, ResultValues, StatusChip],
  templateUrl: './result-card.html',
  styleUrl: './result-card.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ResultCard {
  private readonly api = inject(AssayApi);
  private readonly snackBar = inject(MatSnackBar);

  readonly result = input.required<Result>();
  readonly points = input.required<readonly Measurement[]>();
  readonly assay = input.required<Assay>();
  /** The user may enter results (refit, submit). */
  readonly canEdit = input(false);
  readonly changed = output<ResultChange>();

  /** Exclusions chosen but not yet refitted: measurement id → excluded. Cleared when the result changes. */
  protected readonly pending = linkedSignal<Result, ReadonlyMap<number, boolean>>({ source: this.result, computation: () => new Map() });
  protected readonly fixedTop = linkedSignal(() => fixedText(this.result().fixed, 'top'));
  protected readonly fixedBottom = linkedSignal(() => fixedText(this.result().fixed, 'bottom'));
  protected readonly fixedHill = linkedSignal(() => fixedText(this.result().fixed, 'hillSlope'));
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);

  /** A Schild or modulation result without a curve of its own: its curves and plot are in the run's analysis section. */
  protected readonly analysisOnly = computed(() => {
    const kind = this.result().analysis?.kind;
    return (kind === 'schild' || kind === 'allosteric') && this.points().length === 0;
  });
  protected readonly editable = computed(() => {
    const r = this.result();
    return this.canEdit() && r.source === 'fit' && (r.status === 'draft' || r.status === 'rejected') && !this.analysisOnly();
  });
  /** Drafts can be submitted; an analysis-only draft has nothing to refit here. */
  protected readonly submittable = computed(() => {
    const r = this.result();
    return this.canEdit() && r.source === 'fit' && r.status === 'draft';
  });
  protected readonly yLabel = computed(() => responseAxisLabel(this.assay().kind));
  /** The points as they will be fitted: stored state with the pending choices applied. */
  protected readonly effectivePoints = computed(() => {
    const pending = this.pending();
    return this.points().map((m) => (pending.has(m.id) ? { ...m, excluded: pending.get(m.id)! } : m));
  });
  protected readonly pointRows = computed(() =>
    this.effectivePoints()
      .filter((m) => m.concentrationM !== null)
      .slice()
      .sort((a, b) => a.concentrationM! - b.concentrationM! || (a.replicate ?? 0) - (b.replicate ?? 0))
      .map((m) => ({ ...m, conc: formatMolar(m.concentrationM), changed: this.pending().has(m.id) })),
  );
  protected readonly excludedCount = computed(() => this.effectivePoints().filter((m) => m.excluded).length);
  protected readonly pendingCount = computed(() => this.pending().size);

  /** The fixed parameters typed in; null when one does not parse. */
  protected readonly fixed = computed<{ value: FixedParams; problem: string | null }>(() => {
    const value: FixedParams = {};
    const parse = (text: string, name: FixedName) => {
      if (!text.trim()) return null;
      const v = Number(text);
      if (!Number.isFinite(v)) return `${name === 'hillSlope' ? 'Hill slope' : name === 'top' ? 'Top' : 'Bottom'} must be a number`;
      if (name === 'hillSlope' && (v === 0 || v < -10 || v > 10)) return 'Hill slope must lie between −10 and 10 and not be 0';
      value[name] = v;
      return null;
    };
    const problem = parse(this.fixedTop(), 'top') ?? parse(this.fixedBottom(), 'bottom') ?? parse(this.fixedHill(), 'hillSlope');
    return { value, problem };
  });
  protected readonly fixedChanged = computed(() => {
    const now = this.fixed().value;
    const before = this.result().fixed ?? {};
    return (['top', 'bottom', 'hillSlope'] as FixedName[]).some((k) => (now[k] ?? null) !== (before[k] ?? null));
  });
  protected readonly fixedSummary = computed(() => {
    const f = this.result().fit?.fixed ?? this.result().fixed ?? {};
    const parts = [f.top !== undefined ? `Top ${f.top} %` : '', f.bottom !== undefined ? `Bottom ${f.bottom} %` : '', f.hillSlope !== undefined ? `Hill slope ${f.hillSlope}` : ''].filter(Boolean);
    return parts.length ? `fixed: ${parts.join(', ')}` : 'all four parameters free';
  });
  protected readonly chartLabel = computed(() => {
    const r = this.result();
    return `Concentration–response curve of ${r.batch.batchNumber}${r.condition ? `, ${r.condition}` : ''}: ${this.points().length} points`;
  });

  protected togglePoint(id: number): void {
    if (!this.editable()) return;
    const stored = this.points().find((m) => m.id === id);
    if (!stored) return;
    this.pending.update((map) => {
      const next = new Map(map);
      const current = next.has(id) ? next.get(id)! : stored.excluded;
      if (!current === stored.excluded) next.delete(id);
      else next.set(id, !current);
      return next;
    });
  }

  protected setFixed(name: FixedName, event: Event): void {
    const text = (event.target as HTMLInputElement).value;
    (name === 'top' ? this.fixedTop : name === 'bottom' ? this.fixedBottom : this.fixedHill).set(text);
  }

  protected refit(): void {
    const r = this.result();
    const fixed = this.fixed();
    if (fixed.problem) {
      this.error.set(fixed.problem);
      return;
    }
    const exclude: number[] = [];
    const include: number[] = [];
    for (const [id, excluded] of this.pending()) (excluded ? exclude : include).push(id);
    this.busy.set(true);
    this.error.set(null);
    this.api.refit(r.id, { exclude, include, fixed: fixed.value, version: r.version }).subscribe({
      next: (result) => {
        this.busy.set(false);
        this.changed.emit({ result, exclude, include, refitted: true });
      },
      error: (err: unknown) => {
        this.busy.set(false);
        this.error.set(
          apiErrorCode(err) === 'stale_version' ? 'Someone else changed this result meanwhile; reload the page to see their change, then refit.' : apiErrorMessage(err, 'The curve could not be refitted.'),
        );
      },
    });
  }

  protected submit(): void {
    const r = this.result();
    this.busy.set(true);
    this.error.set(null);
    this.api.submitResult(r.id).subscribe({
      next: (result) => {
        this.busy.set(false);
        this.snackBar.open(`Submitted ${r.batch.batchNumber} for review.`, 'OK', { duration: 5000 });
        this.changed.emit({ result });
      },
      error: (err: unknown) => {
        this.busy.set(false);
        this.error.set(apiErrorMessage(err, 'The result could not be submitted.'));
      },
    });
  }
}
