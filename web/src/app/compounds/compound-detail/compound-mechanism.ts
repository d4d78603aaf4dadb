import { ChangeDetectionStrategy, Component, computed, inject, input, linkedSignal, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { RouterLink } from '@angular/router';
import { of } from 'rxjs';
import { AnalysisChart, SERIES_COLOURS, type ChartSeries } from '../../assays/analysis-chart';
import { AssayApi, type Assay, type Result, type ResultValue } from '../../assays/assay-api';
import { formatMolar } from '../../assays/assay-labels';
import { MechanismApi, type Estimate } from '../../assays/mechanism-api';
import { StatusChip } from '../../assays/status-chip';
import { apiErrorMessage } from '../../shared/api-error';

type CompoundResult = Result & { assay: Assay };

function num(v: number | null | undefined, digits = 2): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(digits).replace(/^-/, '−');
}

function value(v: ResultValue | undefined): string {
  if (!v) return '—';
  const q = v.qualifier === '=' ? '' : `${v.qualifier} `;
  return `${q}${num(v.value)}`;
}

function ci(v: { ci95?: [number, number] | null } | null | undefined): string {
  return v?.ci95 ? `${num(v.ci95[0])} to ${num(v.ci95[1])}` : '';
}

function estimate(e: Estimate | null | undefined): string {
  if (!e || e.value === null) return '—';
  return `${num(e.value)}${e.ci95 ? ` (95 % CI ${num(e.ci95[0])} to ${num(e.ci95[1])})` : ''}`;
}

/** Linear interpolation of a sampled curve at x. */
function interpolate(points: readonly { logConc: number; response: number }[], x: number): number {
  for (let i = 1; i < points.length; i++) {
    const a = points[i - 1];
    const b = points[i];
    if (x >= a.logConc && x <= b.logConc) return a.response + ((b.response - a.response) * (x - a.logConc)) / (b.logConc - a.logConc || 1);
  }
  return NaN;
}

const UNITS = { nM: 1e-9, 'µM': 1e-6 } as const;
type Unit = keyof typeof UNITS;

/**
 * The compound page's mechanism panels: operational-model values per functional result, the bias
 * factor between two readouts of one receptor, and the what-if simulation of the reference agonist
 * in the presence of this compound.
 */
@Component({
  selector: 'lg-compound-mechanism',
  imports: [FormsModule, RouterLink, MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule, MatSelectModule, AnalysisChart, StatusChip],
  templateUrl: './compound-mechanism.html',
  styleUrl: './compound-mechanism.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundMechanism {
  private readonly mechanism = inject(MechanismApi);
  private readonly assayApi = inject(AssayApi);

  readonly registryNumber = input.required<string>();
  readonly results = input.required<readonly CompoundResult[]>();

  // --- Operational model -------------------------------------------------------------------
  protected readonly operationalRows = computed(() =>
    this.results()
      .filter((r) => r.assay.kind === 'functional-agonist' && r.status !== 'rejected' && (r.values.logTau || r.values.logKA || r.values.logTauKA))
      .map((r) => ({
        id: r.id,
        target: r.assay.target.name,
        assayId: r.assay.id,
        assayCode: r.assay.code,
        readout: r.assay.readout,
        batch: r.batch.batchNumber,
        runId: r.runId,
        status: r.status,
        logTau: value(r.values.logTau),
        logTauBound: r.values.logTau?.qualifier === '>',
        logKA: value(r.values.logKA),
        logTauKA: value(r.values.logTauKA),
        logTauKACi: ci(r.values.logTauKA),
      }))
      .sort((a, b) => a.target.localeCompare(b.target) || a.assayCode.localeCompare(b.assayCode)),
  );
  protected readonly hasBound = computed(() => this.operationalRows().some((r) => r.logTauBound));
  /** Agonist-mode results with no operational-model fit, and why (the analysis says). */
  protected readonly notFitted = computed(
    () => this.results().filter((r) => r.assay.kind === 'functional-agonist' && r.status !== 'rejected' && !r.values.logTauKA && !r.values.logTau).length,
  );

  // --- Bias ----------------------------------------------------------------------------------
  /** Receptors at which the compound has results in two or more agonist-mode assays. */
  protected readonly biasTargets = computed(() => {
    const byTarget = new Map<number, { id: number; name: string; assays: Set<number> }>();
    for (const r of this.results()) {
      if (r.assay.kind !== 'functional-agonist') continue;
      const t = byTarget.get(r.assay.target.id) ?? { id: r.assay.target.id, name: r.assay.target.name, assays: new Set<number>() };
      t.assays.add(r.assay.id);
      byTarget.set(t.id, t);
    }
    return [...byTarget.values()].filter((t) => t.assays.size >= 2).sort((a, b) => a.name.localeCompare(b.name));
  });
  protected readonly biasTarget = linkedSignal<number | null>(() => this.biasTargets()[0]?.id ?? null);
  protected readonly bias = rxResource({
    params: () => {
      const t = this.biasTarget();
      return t === null ? undefined : { compound: this.registryNumber(), target: t };
    },
    stream: ({ params }) => (params ? this.mechanism.bias(params.compound, params.target) : of(null)),
  });
  protected readonly biasError = computed(() => (this.bias.error() ? apiErrorMessage(this.bias.error(), 'The bias factor could not be computed.') : null));
  protected readonly biasPairs = computed(() =>
    (this.bias.value()?.pairs ?? []).map((p) => ({
      key: `${p.assay1.id}-${p.assay2.id}`,
      title: `${p.assay1.code} (${p.assay1.readout}) against ${p.assay2.code} (${p.assay2.readout})`,
      deltaDelta: estimate(p.deltaDelta),
      factor: `${num(p.biasFactor.value, 2)}${p.biasFactor.ci95 ? ` (95 % CI ${num(p.biasFactor.ci95[0], 2)} to ${num(p.biasFactor.ci95[1], 2)})` : ''}`,
      towards:
        p.towards === null
          ? 'No preference between the two readouts relative to the reference agonist.'
          : `Relative to the reference agonist, favours ${p.towards}${p.deltaDelta.ci95 && p.deltaDelta.ci95[0] < 0 && p.deltaDelta.ci95[1] > 0 ? ' — but the 95 % CI includes 0, so no bias is shown' : ''}.`,
      d1: estimate(p.deltaPathway1),
      d2: estimate(p.deltaPathway2),
      a1: p.assay1.code,
      a2: p.assay2.code,
    })),
  );

  // --- What-if -------------------------------------------------------------------------------
  protected readonly allAssays = rxResource({ stream: () => this.assayApi.assays() });
  /** Agonist-mode assays with a reference agonist, at receptors where this compound has results. */
  protected readonly whatIfAssays = computed(() => {
    const targets = new Set(this.results().map((r) => r.assay.target.id));
    const fitted = new Set(this.results().filter((r) => r.values.logTau && r.values.logKA).map((r) => r.assay.id));
    const tested = new Set(this.results().map((r) => r.assay.id));
    // Assays with this compound's operational-model fit first, then those it was tested in.
    const rank = (id: number) => (fitted.has(id) ? 0 : tested.has(id) ? 1 : 2);
    return (this.allAssays.value() ?? [])
      .filter((a) => a.kind === 'functional-agonist' && a.referenceCompound && targets.has(a.target.id))
      .sort((a, b) => rank(a.id) - rank(b.id) || a.code.localeCompare(b.code));
  });
  protected readonly whatIfAssay = linkedSignal<number | null>(() => this.whatIfAssays()[0]?.id ?? null);
  protected readonly concText = signal('');
  protected readonly concUnit = signal<Unit>('nM');
  protected readonly units = Object.keys(UNITS) as Unit[];
  /** The concentrations typed, in M; null for "automatic"; a string when they do not parse. */
  protected readonly concentrations = computed<number[] | null | string>(() => {
    const text = this.concText().trim();
    if (!text) return null;
    const parts = text.split(/[,;\s]+/).filter(Boolean);
    const values = parts.map(Number);
    if (values.some((v) => !Number.isFinite(v) || v < 0)) return 'Concentrations are numbers of 0 or more, separated by commas.';
    if (values.length > 11) return 'At most 11 concentrations (the agonist alone is always drawn).';
    const molar = values.map((v) => Number((v * UNITS[this.concUnit()]).toPrecision(6)));
    if (molar.some((m) => m > 1)) return 'Concentrations above 1 M are not meaningful.';
    return [...new Set([0, ...molar])].sort((a, b) => a - b);
  });
  protected readonly concProblem = computed(() => {
    const c = this.concentrations();
    return typeof c === 'string' ? c : null;
  });
  /** The request last asked for (the simulation runs on "Simulate", not on every keystroke). */
  protected readonly whatIfRequest = signal<{ assay: number; conc: number[] | null } | null>(null);
  protected readonly whatIf = rxResource({
    params: () => this.whatIfRequest() ?? undefined,
    stream: ({ params }) => (params ? this.mechanism.whatIf(this.registryNumber(), params.assay, params.conc ?? undefined) : of(null)),
  });
  protected readonly whatIfError = computed(() => (this.whatIf.error() ? apiErrorMessage(this.whatIf.error(), 'The simulation could not be run.') : null));
  protected readonly whatIfSeries = computed<ChartSeries[]>(() => {
    const a = this.whatIf.value();
    if (!a) return [];
    return a.curves.map((c, i) => ({
      label: c.bConcM === 0 ? `${a.agonist.registryNumber} alone` : `+ ${a.partner.registryNumber} ${formatMolar(c.bConcM)}`,
      colour: SERIES_COLOURS[i % SERIES_COLOURS.length],
      line: true,
      dash: c.bConcM === 0 ? undefined : i % 2 ? [6, 3] : undefined,
      width: c.bConcM === 0 ? 3 : 2,
      points: c.points.map((p) => ({ x: p.logConc, y: p.response })),
    }));
  });
  /**
   * The agonist concentration at which it alone gives 90 % of its maximum: there the partial
   * agonist's effect shows best (enough agonist always wins back the maximum at one site).
   */
  protected readonly whatIfProbe = computed<number | null>(() => {
    const alone = this.whatIf.value()?.curves.find((c) => c.bConcM === 0);
    if (!alone) return null;
    const level = alone.baseline + 0.9 * (alone.maximum - alone.baseline);
    return alone.points.find((p) => p.response >= level)?.logConc ?? null;
  });
  protected readonly probeText = computed(() => {
    const probe = this.whatIfProbe();
    return probe === null ? '—' : formatMolar(10 ** probe);
  });
  protected readonly whatIfRows = computed(() => {
    const probe = this.whatIfProbe();
    return (this.whatIf.value()?.curves ?? []).map((c) => ({
      conc: c.bConcM === 0 ? 'none' : formatMolar(c.bConcM),
      baseline: num(c.baseline, 0),
      atProbe: probe === null ? '—' : num(interpolate(c.points, probe), 0),
      maximum: num(c.maximum, 0),
      midpoint: Number.isFinite(c.logMidpoint) ? formatMolar(10 ** c.logMidpoint) : '—',
    }));
  });

  protected simulate(): void {
    const assay = this.whatIfAssay();
    const conc = this.concentrations();
    if (assay === null || typeof conc === 'string') return;
    this.whatIfRequest.set({ assay, conc });
  }

  protected readonly num = num;
  protected readonly formatMolar = formatMolar;
}
