import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { Legend, LinearScale, LineElement, PointElement, ScatterController, Tooltip, type ChartData, type ChartDataset, type ChartOptions, type PointStyle, type TooltipItem } from 'chart.js';
import { BaseChartDirective, provideCharts } from 'ng2-charts';

/** One point of a series, with what its tooltip says. */
export interface ChartPoint {
  x: number;
  y: number;
  /** Drawn hollow and grey (left out of a fit). */
  excluded?: boolean;
  tip?: string;
}

/** A series: points, or a line through them (a fitted curve, a regression, a simulation). */
export interface ChartSeries {
  label: string;
  colour: string;
  points: ChartPoint[];
  /** Join the points with a line and draw no markers. */
  line?: boolean;
  dash?: number[];
  shape?: PointStyle;
  /** Keep the series out of the legend (a fitted curve beside its own points). */
  hideInLegend?: boolean;
  width?: number;
}

type Dataset = ChartDataset<'scatter', ChartPoint[]> & { lgLine: boolean; lgHidden: boolean };

// Our palette (web/src/theme/_palettes.scss), told apart by shape too.
export const SERIES_COLOURS = ['#232c2c', '#0aa0a9', '#bf852e', '#825501', '#5a7d80', '#034f54', '#87745d', '#40bbc4'];
export const SERIES_SHAPES: PointStyle[] = ['circle', 'triangle', 'rect', 'rectRot', 'crossRot', 'star', 'circle', 'triangle'];
const EXCLUDED_COLOUR = '#889393';
const AXIS_TEXT = '#3f4849';
const GRID = '#e0e3e3';

function minus(v: number): string {
  return String(Number(v.toFixed(6))).replace('-', '−');
}

/** A round tick step near `raw`: 1, 2, 2.5 or 5 times a power of ten. */
function niceStep(raw: number): number {
  const p = 10 ** Math.floor(Math.log10(raw));
  return [1, 2, 2.5, 5, 10].map((m) => m * p).find((s) => s >= raw) ?? 10 * p;
}

/** The 4PL as plotted: Y = Bottom + (Top − Bottom) / (1 + 10^((logEC50 − X)·nH)). */
export function fourPL(x: number, p: { bottom: number; top: number; logEC50: number; hillSlope: number }): number {
  return p.bottom + (p.top - p.bottom) / (1 + Math.pow(10, (p.logEC50 - x) * p.hillSlope));
}

/**
 * A chart of several series on linear axes (log concentrations, log(DR − 1), responses): the Schild
 * plot, agonist curves at several antagonist or modulator concentrations, the what-if simulation.
 */
@Component({
  selector: 'lg-analysis-chart',
  imports: [BaseChartDirective],
  providers: [provideCharts({ registerables: [ScatterController, LineElement, PointElement, LinearScale, Tooltip, Legend] })],
  template: `
    @if (hasData()) {
      <canvas baseChart type="scatter" [data]="data()" [options]="options()" [legend]="true" role="img" [attr.aria-label]="label()"></canvas>
    } @else {
      <p class="none">{{ emptyText() }}</p>
    }
  `,
  styles: `
    :host { display: block; position: relative; height: var(--lg-chart-height); min-width: 0; }
    .none {
      display: flex; align-items: center; justify-content: center; height: 100%; margin: 0; padding: 0 16px; text-align: center;
      border: 1px dashed var(--mat-sys-outline-variant); border-radius: 8px;
      color: var(--mat-sys-on-surface-variant); font: var(--mat-sys-body-small);
    }
  `,
  host: { '[style.--lg-chart-height.px]': 'height()' },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AnalysisChart {
  readonly series = input.required<readonly ChartSeries[]>();
  readonly xLabel = input.required<string>();
  readonly yLabel = input.required<string>();
  /** Text for screen readers: what the chart shows, in a sentence. */
  readonly label = input.required<string>();
  readonly height = input(300);
  readonly emptyText = input('Nothing to draw.');
  /** Fixed y range; by default it follows the data. */
  readonly yRange = input<[number, number] | null>(null);
  /** Mark y = 0 (and y = 100 for responses) with a darker grid line. */
  readonly yMarks = input<number[]>([0]);

  protected readonly hasData = computed(() => this.series().some((s) => s.points.length > 0));

  private readonly xRange = computed<[number, number]>(() => {
    const xs = this.series().flatMap((s) => s.points.map((p) => p.x)).filter(Number.isFinite);
    if (!xs.length) return [-10, -4];
    const lo = Math.min(...xs);
    const hi = Math.max(...xs);
    const pad = Math.max(0.25, (hi - lo) * 0.04);
    return [lo - pad, hi + pad];
  });

  /** The y range on round steps (so the axis ends on ticks), padded around the data and the marks. */
  private readonly yBounds = computed<[number, number, number | undefined]>(() => {
    const fixed = this.yRange();
    if (fixed) return [fixed[0], fixed[1], undefined];
    const ys = this.series().flatMap((s) => s.points.map((p) => p.y)).filter(Number.isFinite);
    if (!ys.length) return [0, 1, undefined];
    const lo = Math.min(...ys);
    const hi = Math.max(...ys);
    const pad = Math.max(0.2, (hi - lo) * 0.06);
    const step = niceStep((hi - lo + 2 * pad) / 6);
    return [Math.floor((lo - pad) / step) * step, Math.ceil((hi + pad) / step) * step, step];
  });

  protected readonly data = computed<ChartData<'scatter', ChartPoint[]>>(() => ({
    datasets: this.series().map((s): Dataset => {
      const excludedColours = s.points.map((p) => (p.excluded ? EXCLUDED_COLOUR : s.colour));
      return {
        lgLine: !!s.line,
        lgHidden: !!s.hideInLegend,
        label: s.label,
        data: s.points,
        showLine: !!s.line,
        borderColor: s.line ? s.colour : excludedColours,
        backgroundColor: s.line ? s.colour : s.points.map((p) => (p.excluded ? 'rgba(255, 255, 255, 0)' : s.colour)),
        borderWidth: s.line ? (s.width ?? 2) : 1.5,
        borderDash: s.dash,
        pointStyle: s.line ? 'line' : (s.shape ?? 'circle'),
        pointRadius: s.line ? 0 : 4,
        pointHoverRadius: s.line ? 0 : 6,
        pointHitRadius: s.line ? 0 : 4,
        order: s.line ? 10 : 1,
      };
    }),
  }));

  protected readonly options = computed<ChartOptions<'scatter'>>(() => {
    const [xMin, xMax] = this.xRange();
    const [yMin, yMax, yStep] = this.yBounds();
    const marks = this.yMarks();
    const font = { family: 'Roboto, "Helvetica Neue", sans-serif', size: 12 };
    const wholeX = xMax - xMin >= 2;
    return {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      interaction: { mode: 'nearest', intersect: true },
      layout: { padding: { top: 4, right: 8 } },
      scales: {
        x: {
          type: 'linear',
          min: xMin,
          max: xMax,
          title: { display: true, text: this.xLabel(), color: AXIS_TEXT, font },
          ticks: { color: AXIS_TEXT, font, callback: (v) => minus(Number(v)) },
          // Whole log units when the range spans a few of them.
          afterBuildTicks: wholeX
            ? (scale) => {
                scale.ticks = [];
                for (let v = Math.ceil(xMin); v <= Math.floor(xMax); v++) scale.ticks.push({ value: v });
              }
            : undefined,
          grid: { color: GRID },
        },
        y: {
          type: 'linear',
          min: yMin,
          max: yMax,
          title: { display: true, text: this.yLabel(), color: AXIS_TEXT, font },
          ticks: { stepSize: yStep, color: AXIS_TEXT, font, callback: (v) => minus(Number(v)) },
          grid: { color: (c) => (c.tick && marks.includes(c.tick.value) ? '#9aa8a9' : GRID) },
        },
      },
      plugins: {
        legend: {
          position: 'bottom',
          labels: {
            usePointStyle: true,
            boxWidth: 8,
            boxHeight: 8,
            padding: 12,
            color: AXIS_TEXT,
            font,
            filter: (item, data) => !(data.datasets[item.datasetIndex ?? 0] as unknown as Dataset).lgHidden,
          },
        },
        tooltip: {
          filter: (item: TooltipItem<'scatter'>) => !(item.dataset as unknown as Dataset).lgLine,
          callbacks: {
            title: () => '',
            label: (item: TooltipItem<'scatter'>) => {
              const p = item.raw as ChartPoint;
              return p.tip ?? `${item.dataset.label}: ${minus(p.x)}, ${minus(p.y)}`;
            },
          },
        },
      },
    };
  });
}
