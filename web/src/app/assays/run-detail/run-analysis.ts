import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { of } from 'rxjs';
import { apiErrorMessage } from '../../shared/api-error';
import { AnalysisChart, fourPL, SERIES_COLOURS, SERIES_SHAPES, type ChartSeries } from '../analysis-chart';
import type { AssayKind } from '../assay-api';
import { formatMolar } from '../assay-labels';
import { MechanismApi, type AllostericItem, type AnalysisCurve, type Estimate, type SchildFlag, type SchildItem } from '../mechanism-api';
import { StatusChip } from '../status-chip';

/** Schild flags in words a pharmacologist reads (thresholds are common practice, not a published standard). */
const SCHILD_FLAGS: Record<SchildFlag, string> = {
  'slope-not-unity': 'Slope not 1: the shifts do not follow simple competition (possibly non-competitive or allosteric antagonism), so no pKB is given.',
  'saturating-shift': 'The shift levels off at the highest concentrations: the signature of an allosteric modulator with limited cooperativity. The x-intercept of such a plot is no affinity, so pA2 is not reported as a value.',
  'depressed-maximum': 'The agonist maximum falls by more than 20 % with the antagonist: possibly insurmountable (non-competitive) antagonism.',
  'too-few-concentrations': 'Fewer than 3 antagonist concentrations gave a dose ratio: the slope and pA2 are poorly defined.',
  'dose-ratio-not-above-1': 'Some curves are not shifted to the right (dose ratio ≤ 1); they are left out of the regression.',
  'not-fitted': 'Some agonist curves gave no usable EC50 (fit failed or EC50 outside the tested range); they are left out.',
  'no-control': 'There is no usable agonist curve without antagonist, so no dose ratio can be computed.',
};

const ATCM_FLAGS: Record<string, string> = {
  'too-few-concentrations': 'Fewer than 2 modulator concentrations: the cooperativity model was not fitted.',
  'kb-undetermined': 'The modulator’s affinity (log KB) is not determined by these concentrations.',
  'alpha-undetermined': 'The cooperativity (log α) is not determined by these concentrations.',
  'not-converged': 'The cooperativity fit did not converge.',
};

const CLASS_LABELS: Record<string, string> = {
  'positive allosteric modulator': 'Positive allosteric modulator (PAM)',
  'negative allosteric modulator': 'Negative allosteric modulator (NAM)',
  'allosteric agonist': 'Allosteric agonist',
  neutral: 'No modulation detected',
  inconclusive: 'Inconclusive',
};

const RESPONSE_LABEL = 'Agonist response (% of window)';

function num(v: number | null | undefined, digits = 2): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(digits).replace(/^-/, '−');
}

/** A change with its sign, and no sign on a change that rounds to 0: +20, −35, 0. */
function signed(v: number, digits: number): string {
  const rounded = Number(v.toFixed(digits));
  return rounded === 0 ? num(0, digits) : (rounded > 0 ? '+' : '') + num(rounded, digits);
}

function estimate(e: Estimate | null | undefined, digits = 2): string {
  if (!e || e.value === null) return '—';
  const ci = e.ci95 ? ` (95 % CI ${num(e.ci95[0], digits)} to ${num(e.ci95[1], digits)})` : e.se !== null ? ` ± ${num(e.se, digits)} SE` : '';
  return `${num(e.value, digits)}${ci}`;
}

/** The agonist curves: points and the fitted 4PL of each, the control first. */
function curveSeries(curves: readonly AnalysisCurve[], role: 'antagonist' | 'modulator'): ChartSeries[] {
  const out: ChartSeries[] = [];
  curves.forEach((c, i) => {
    const colour = SERIES_COLOURS[i % SERIES_COLOURS.length];
    const label = c.concentrationM === 0 ? 'Agonist alone' : `+ ${role} ${formatMolar(c.concentrationM)}`;
    const points = c.points
      .filter((p) => p.response !== null && Number.isFinite(p.response))
      .map((p) => ({ x: p.logConc, y: p.response!, excluded: p.excluded, tip: `${label}: agonist ${formatMolar(10 ** p.logConc)}, ${p.response!.toFixed(1)} %${p.excluded ? ' (excluded)' : ''}` }));
    out.push({ label, colour, points, shape: SERIES_SHAPES[i % SERIES_SHAPES.length] });
    const f = c.fit;
    if (f.ok && f.bottom !== null && f.top !== null && f.logEC50 !== null && f.hillSlope !== null && points.length) {
      const xs = points.map((p) => p.x);
      const lo = Math.min(...xs) - 0.3;
      const hi = Math.max(...xs) + 0.3;
      const params = { bottom: f.bottom, top: f.top, logEC50: f.logEC50, hillSlope: f.hillSlope };
      out.push({ label: `${label} (fit)`, colour, line: true, hideInLegend: true, points: Array.from({ length: 81 }, (_, k) => ({ x: lo + ((hi - lo) * k) / 80, y: fourPL(lo + ((hi - lo) * k) / 80, params) })) });
    }
  });
  return out;
}

interface SchildView {
  item: SchildItem;
  plot: ChartSeries[];
  curves: ChartSeries[];
  pA2: string;
  pA2Note: string | null;
  slope: string;
  pKB: string | null;
  flags: { flag: SchildFlag; text: string }[];
  rows: { conc: string; dr: string; logDr: string }[];
}

interface AllostericView {
  item: AllostericItem;
  curves: ChartSeries[];
  rows: { conc: string; ec50: string; fold: string; emax: string }[];
  call: string;
  logKB: string | null;
  logAlpha: string | null;
  alphaText: string | null;
  atcmFlags: string[];
  alone: string | null;
}

/**
 * The run page's mechanism section: the Schild plot and the agonist curves per antagonist
 * concentration (antagonist-mode runs), or the agonist curves per modulator concentration with
 * fold-shifts, Emax changes, the cooperativity model and the classification (modulation runs).
 */
@Component({
  selector: 'lg-run-analysis',
  imports: [MatIconModule, MatProgressBarModule, RouterLink, AnalysisChart, StatusChip],
  templateUrl: './run-analysis.html',
  styleUrl: './run-analysis.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RunAnalysis {
  private readonly api = inject(MechanismApi);

  readonly runId = input.required<number>();
  readonly kind = input.required<AssayKind>();
  /** Bumped by the page after a refit, to load the analyses again. */
  readonly revision = input(0);

  protected readonly schild = rxResource({
    params: () => (this.kind() === 'functional-antagonist' ? { id: this.runId(), r: this.revision() } : undefined),
    stream: ({ params }) => (params ? this.api.schild(params.id) : of(null)),
  });
  protected readonly allosteric = rxResource({
    params: () => (this.kind() === 'allosteric-modulation' ? { id: this.runId(), r: this.revision() } : undefined),
    stream: ({ params }) => (params ? this.api.allosteric(params.id) : of(null)),
  });

  protected readonly loading = computed(() => this.schild.isLoading() || this.allosteric.isLoading());
  protected readonly errorText = computed(() => {
    const err = this.schild.error() ?? this.allosteric.error();
    return err ? apiErrorMessage(err, 'The analysis of this run could not be loaded.') : null;
  });

  protected readonly schildViews = computed<SchildView[]>(() =>
    (this.schild.value()?.items ?? []).map((item) => {
      const s = item.schild;
      const saturating = s.flags.includes('saturating-shift');
      const plot: ChartSeries[] = [
        {
          label: 'Dose ratios',
          colour: SERIES_COLOURS[0],
          points: s.points.map((p) => ({ x: p.logB, y: p.logDrMinus1, tip: `[B] ${formatMolar(p.antagonistConcM)}: dose ratio ${num(p.doseRatio, 1)}, log(DR − 1) ${num(p.logDrMinus1)}` })),
        },
      ];
      if (s.line.length) plot.push({ label: `Regression, slope ${num(s.slope?.value)}`, colour: SERIES_COLOURS[1], line: true, points: s.line.map((p) => ({ x: p.logB, y: p.logDrMinus1 })) });
      if (s.xIntercept !== null && s.line.length && !saturating) {
        const [a, b] = [s.line[0].logB, s.line[s.line.length - 1].logB];
        if (s.xIntercept > a - 2 && s.xIntercept < b + 2) plot.push({ label: `x-intercept = −pA2 (${num(s.xIntercept)})`, colour: SERIES_COLOURS[2], shape: 'crossRot', points: [{ x: s.xIntercept, y: 0, tip: `x-intercept ${num(s.xIntercept)}: pA2 ${num(s.pA2?.value)}` }] });
      }
      return {
        item,
        plot,
        curves: curveSeries(item.curves, 'antagonist'),
        pA2: saturating ? 'not reported' : estimate(s.pA2),
        pA2Note: saturating ? `the shift saturates, so the regression’s x-intercept (${num(s.pA2?.value)}) is no affinity` : null,
        slope: estimate(s.slope),
        pKB: s.pKB ? estimate(s.pKB) : null,
        flags: s.flags.map((flag) => ({ flag, text: SCHILD_FLAGS[flag] ?? flag })),
        rows: s.points.map((p) => ({ conc: formatMolar(p.antagonistConcM), dr: num(p.doseRatio, 1), logDr: num(p.logDrMinus1) })),
      };
    }),
  );

  protected readonly allostericViews = computed<AllostericView[]>(() =>
    (this.allosteric.value()?.items ?? []).map((item) => {
      const a = item.allosteric;
      const curves = curveSeries(item.curves, 'modulator');
      const alone = item.modulatorAlone;
      if (alone?.points.length) {
        curves.push({
          label: `Modulator alone (${item.compound.registryNumber})`,
          colour: '#b3261e',
          shape: 'star',
          points: alone.points.filter((p) => p.response !== null).map((p) => ({ x: p.logConc, y: p.response!, excluded: p.excluded, tip: `Modulator alone ${formatMolar(10 ** p.logConc)}: ${p.response!.toFixed(1)} %` })),
        });
        const f = alone.fit;
        if (f.ok && f.bottom !== null && f.top !== null && f.logEC50 !== null && f.hillSlope !== null) {
          const xs = alone.points.map((p) => p.logConc);
          const lo = Math.min(...xs) - 0.3;
          const hi = Math.max(...xs) + 0.3;
          const params = { bottom: f.bottom, top: f.top, logEC50: f.logEC50, hillSlope: f.hillSlope };
          curves.push({ label: 'Modulator alone (fit)', colour: '#b3261e', line: true, dash: [6, 4], hideInLegend: true, points: Array.from({ length: 81 }, (_, k) => ({ x: lo + ((hi - lo) * k) / 80, y: fourPL(lo + ((hi - lo) * k) / 80, params) })) });
        }
      }
      const atcmOk = a.atcm.ok;
      const kbOk = atcmOk && !a.atcm.flags.includes('kb-undetermined');
      const alphaOk = atcmOk && !a.atcm.flags.includes('alpha-undetermined');
      return {
        item,
        curves,
        rows: a.shifts.map((s) => ({
          conc: formatMolar(s.modulatorConcM),
          ec50: formatMolar(s.ec50M),
          fold: `${num(s.foldShift)}×`,
          emax: s.emaxChange === null ? '—' : `${signed(s.emaxChange * 100, 0)} %`,
        })),
        call: CLASS_LABELS[a.classification.call] ?? a.classification.call,
        logKB: kbOk ? estimate(a.atcm.logKB) : null,
        logAlpha: alphaOk ? estimate(a.atcm.logAlpha) : null,
        alphaText: alphaOk && a.atcm.logAlpha.value !== null ? `α = ${num(10 ** a.atcm.logAlpha.value, 2)} (${a.atcm.logAlpha.value > 0 ? 'positive' : a.atcm.logAlpha.value < 0 ? 'negative' : 'no'} cooperativity)` : null,
        atcmFlags: a.atcm.flags.map((f) => ATCM_FLAGS[f] ?? f),
        alone: alone ? `Emax ${num(alone.emax, 0)} %${alone.alpha !== null ? `, α ${num(alone.alpha)}` : ''}` : null,
      };
    }),
  );

  protected readonly responseLabel = RESPONSE_LABEL;
  protected readonly formatMolar = formatMolar;
  protected readonly num = num;
}
