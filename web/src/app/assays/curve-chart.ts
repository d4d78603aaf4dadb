import { ChangeDetectionStrategy, Component, computed, input, output } from '@angular/core';
import { Legend, LinearScale, LineElement, PointElement, ScatterController, Tooltip, type ChartData, type ChartDataset, type ChartOptions, type Plugin, type PointStyle, type TooltipItem } from 'chart.js';
import { BaseChartDirective, provideCharts } from 'ng2-charts';
import type { CurveFit, Measurement } from './assay-api';
import { formatMolar } from './assay-labels';

/** One plotted point, with what its tooltip says. */
interface PlotPoint {
  id: number;
  x: number;
  y: number;
  molar: number;
  well: string | null;
  replicate: number | null;
  excluded: boolean;
}

/** The mean of the included points at one concentration, with its sample SD. */
interface MeanPoint {
  x: number;
  y: number;
  sd: number;
  n: number;
}

type CurveDataset = ChartDataset<'scatter', (PlotPoint | MeanPoint | { x: number; y: number })[]> & { errorBars?: boolean; kind: 'points' | 'excluded' | 'mean' | 'curve' };

// Our palette (web/src/theme/_palettes.scss): estuary teal and ochre tones, told apart by shape too.
const CURVE_COLOUR = '#034f54';
const REPLICATE_COLOURS = ['#0aa0a9', '#bf852e', '#5a7d80', '#825501', '#40bbc4', '#87745d'];
const REPLICATE_SHAPES: PointStyle[] = ['circle', 'triangle', 'rect', 'rectRot', 'crossRot', 'star'];
const EXCLUDED_COLOUR = '#889393';
const MEAN_COLOUR = '#232c2c';
const AXIS_TEXT = '#3f4849';
const GRID = '#e0e3e3';
const SAMPLES = 120;

/** Draws mean ± SD as vertical bars with caps for datasets marked `errorBars`. */
const errorBarsPlugin: Plugin<'scatter'> = {
  id: 'lgErrorBars',
  afterDatasetsDraw(chart) {
    const { ctx, chartArea, scales } = chart;
    chart.data.datasets.forEach((dataset, index) => {
      const ds = dataset as unknown as CurveDataset;
      if (!ds.errorBars || !chart.isDatasetVisible(index)) return;
      ctx.save();
      ctx.beginPath();
      ctx.rect(chartArea.left, chartArea.top, chartArea.right - chartArea.left, chartArea.bottom - chartArea.top);
      ctx.clip();
      ctx.strokeStyle = MEAN_COLOUR;
      ctx.lineWidth = 1.25;
      for (const p of ds.data as MeanPoint[]) {
        if (!(p.sd > 0)) continue;
        const x = scales['x'].getPixelForValue(p.x);
        const top = scales['y'].getPixelForValue(p.y + p.sd);
        const bottom = scales['y'].getPixelForValue(p.y - p.sd);
        ctx.beginPath();
        ctx.moveTo(x, top);
        ctx.lineTo(x, bottom);
        ctx.moveTo(x - 4, top);
        ctx.lineTo(x + 4, top);
        ctx.moveTo(x - 4, bottom);
        ctx.lineTo(x + 4, bottom);
        ctx.stroke();
      }
      ctx.restore();
    });
  },
};

function fourPL(x: number, p: { bottom: number; top: number; logEC50: number; hillSlope: number }): number {
  return p.bottom + (p.top - p.bottom) / (1 + Math.pow(10, (p.logEC50 - x) * p.hillSlope));
}

function sampleSd(values: number[]): number {
  if (values.length < 2) return 0;
  const mean = values.reduce((a, b) => a + b, 0) / values.length;
  return Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / (values.length - 1));
}

function minus(v: number): string {
  return String(v).replace('-', '−');
}

/**
 * A concentration–response curve: points per replicate (excluded ones hollow and grey), mean ± SD
 * per concentration, and the fitted four-parameter logistic drawn over the tested range ± 0.5 log.
 * Used on the run page and in the review queue.
 */
@Component({
  selector: 'lg-curve-chart',
  imports: [BaseChartDirective],
  providers: [provideCharts({ registerables: [ScatterController, LineElement, PointElement, LinearScale, Tooltip, Legend] })],
  template: `
    @if (hasPoints()) {
      <canvas baseChart type="scatter" [data]="data()" [options]="options()" [legend]="!compact()" [plugins]="plugins" role="img" [attr.aria-label]="label()"
        [class.interactive]="interactive()" (chartClick)="clickPoint($event.active)"></canvas>
    } @else {
      <p class="none">No concentration–response points to draw.</p>
    }
  `,
  styles: `
    :host {
      display: block;
      position: relative;
      height: var(--lg-curve-height);
      min-width: 0;
    }
    canvas.interactive { cursor: pointer; }
    .none {
      display: flex;
      align-items: center;
      justify-content: center;
      height: 100%;
      margin: 0;
      border: 1px dashed var(--mat-sys-outline-variant);
      border-radius: 8px;
      color: var(--mat-sys-on-surface-variant);
      font: var(--mat-sys-body-small);
    }
  `,
  host: { '[style.--lg-curve-height.px]': 'height()' },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CurveChart {
  /** The curve's measurements (controls are ignored). */
  readonly points = input.required<readonly Measurement[]>();
  readonly fit = input<CurveFit | null>(null);
  readonly yLabel = input('Response (%)');
  /** Text for screen readers. */
  readonly label = input('Concentration–response curve');
  readonly height = input(260);
  /** Small charts (review queue): no legend, smaller type. */
  readonly compact = input(false);
  /** Clicking a point asks to exclude or restore it. */
  readonly interactive = input(false);
  /** The measurement id of a clicked point (interactive charts only). */
  readonly pointToggled = output<number>();

  protected readonly plugins = [errorBarsPlugin];

  protected clickPoint(active: object[] | undefined): void {
    if (!this.interactive() || !active?.length) return;
    const { datasetIndex, index } = active[0] as { datasetIndex: number; index: number };
    const dataset = this.data().datasets[datasetIndex] as CurveDataset | undefined;
    if (dataset?.kind !== 'points' && dataset?.kind !== 'excluded') return;
    const point = dataset.data[index] as PlotPoint | undefined;
    if (point) this.pointToggled.emit(point.id);
  }

  private readonly plotted = computed<PlotPoint[]>(() =>
    this.points()
      .filter((m) => m.control === null && m.concentrationM !== null && m.concentrationM > 0 && m.normalised !== null && Number.isFinite(m.normalised))
      .map((m) => ({ id: m.id, x: Math.log10(m.concentrationM!), y: m.normalised!, molar: m.concentrationM!, well: m.well, replicate: m.replicate, excluded: m.excluded })),
  );
  protected readonly hasPoints = computed(() => this.plotted().length > 0);

  /** The fitted parameters when there is a curve to draw. */
  private readonly curveParams = computed(() => {
    const fit = this.fit();
    if (!fit?.ok) return null;
    const { bottom, top, logEC50, hillSlope } = fit.params;
    if ([bottom, top, logEC50, hillSlope].some((e) => e.value === null || !Number.isFinite(e.value))) return null;
    return { bottom: bottom.value!, top: top.value!, logEC50: logEC50.value!, hillSlope: hillSlope.value! };
  });

  private readonly xRange = computed<[number, number]>(() => {
    const xs = this.plotted().map((p) => p.x);
    if (!xs.length) return [-10, -4];
    return [Math.min(...xs) - 0.5, Math.max(...xs) + 0.5];
  });

  /**
   * The y axis follows the measured points (never the extrapolated curve), at least −10 to 110 %,
   * on round steps so that 0 and 100 % are always ticks.
   */
  private readonly yRange = computed<[number, number, number]>(() => {
    const ys = this.plotted().map((p) => p.y);
    const lo = Math.min(-10, ...ys.map((y) => y - 5));
    const hi = Math.max(110, ...ys.map((y) => y + 5));
    const span = hi - lo;
    const step = span <= 160 ? 20 : span <= 400 ? 50 : span <= 800 ? 100 : 200;
    return [Math.floor(lo / step) * step, Math.ceil(hi / step) * step, step];
  });

  protected readonly data = computed<ChartData<'scatter', CurveDataset['data']>>(() => {
    const points = this.plotted();
    const datasets: CurveDataset[] = [];
    const included = points.filter((p) => !p.excluded);
    const replicates = [...new Set(included.map((p) => p.replicate))].sort((a, b) => (a ?? 0) - (b ?? 0));
    replicates.forEach((rep, i) => {
      const colour = REPLICATE_COLOURS[i % REPLICATE_COLOURS.length];
      datasets.push({
        kind: 'points',
        label: rep === null ? 'Points' : `Replicate ${rep}`,
        data: included.filter((p) => p.replicate === rep),
        backgroundColor: colour,
        borderColor: colour,
        pointStyle: REPLICATE_SHAPES[i % REPLICATE_SHAPES.length],
        pointRadius: this.compact() ? 3 : 4,
        pointHoverRadius: 6,
      });
    });
    const excluded = points.filter((p) => p.excluded);
    if (excluded.length) {
      datasets.push({
        kind: 'excluded',
        label: 'Excluded',
        data: excluded,
        backgroundColor: 'rgba(255, 255, 255, 0)',
        borderColor: EXCLUDED_COLOUR,
        borderWidth: 1.5,
        pointStyle: 'circle',
        pointRadius: this.compact() ? 3 : 4,
        pointHoverRadius: 6,
      });
    }
    const byConc = new Map<string, PlotPoint[]>();
    for (const p of included) {
      const key = p.x.toFixed(6);
      byConc.set(key, [...(byConc.get(key) ?? []), p]);
    }
    const means: MeanPoint[] = [...byConc.values()]
      .filter((group) => group.length > 1)
      .map((group) => ({ x: group[0].x, y: group.reduce((a, p) => a + p.y, 0) / group.length, sd: sampleSd(group.map((p) => p.y)), n: group.length }))
      .sort((a, b) => a.x - b.x);
    if (means.length) {
      datasets.push({
        kind: 'mean',
        errorBars: true,
        label: 'Mean ± SD',
        data: means,
        backgroundColor: MEAN_COLOUR,
        borderColor: MEAN_COLOUR,
        borderWidth: 2,
        pointStyle: 'line',
        pointRadius: 7,
        pointHoverRadius: 8,
      });
    }
    const params = this.curveParams();
    if (params) {
      const [lo, hi] = this.xRange();
      const curve = Array.from({ length: SAMPLES + 1 }, (_, i) => {
        const x = lo + ((hi - lo) * i) / SAMPLES;
        return { x, y: fourPL(x, params) };
      });
      datasets.push({
        kind: 'curve',
        label: 'Fitted curve',
        data: curve,
        showLine: true,
        borderColor: CURVE_COLOUR,
        backgroundColor: CURVE_COLOUR,
        borderWidth: 2,
        pointRadius: 0,
        pointHoverRadius: 0,
        pointHitRadius: 0,
        pointStyle: 'line',
        order: 10,
      });
    }
    return { datasets };
  });

  protected readonly options = computed<ChartOptions<'scatter'>>(() => {
    const [lo, hi] = this.xRange();
    const [yMin, yMax, yStep] = this.yRange();
    const compact = this.compact();
    const font = { family: 'Roboto, "Helvetica Neue", sans-serif', size: compact ? 11 : 12 };
    return {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      interaction: { mode: 'nearest', intersect: true },
      layout: { padding: { top: 4, right: 8 } },
      scales: {
        x: {
          type: 'linear',
          min: lo,
          max: hi,
          title: { display: true, text: 'log [compound] (M)', color: AXIS_TEXT, font },
          ticks: { color: AXIS_TEXT, font, callback: (v) => minus(Number(v)) },
          // Whole log units only (…, −9, −8, …), whatever the range's edges.
          afterBuildTicks: (scale) => {
            scale.ticks = [];
            for (let v = Math.ceil(lo); v <= Math.floor(hi); v++) scale.ticks.push({ value: v });
          },
          grid: { color: GRID },
        },
        y: {
          type: 'linear',
          min: yMin,
          max: yMax,
          title: { display: true, text: this.yLabel(), color: AXIS_TEXT, font },
          ticks: { stepSize: yStep, color: AXIS_TEXT, font, callback: (v) => minus(Number(v)) },
          grid: { color: (c) => (c.tick?.value === 0 || c.tick?.value === 100 ? '#bcc9ca' : GRID) },
        },
      },
      plugins: {
        legend: {
          display: !compact,
          position: 'bottom',
          labels: { usePointStyle: true, boxWidth: 8, boxHeight: 8, padding: 12, color: AXIS_TEXT, font },
        },
        tooltip: {
          filter: (item: TooltipItem<'scatter'>) => (item.dataset as unknown as CurveDataset).kind !== 'curve',
          callbacks: {
            title: () => '',
            label: (item: TooltipItem<'scatter'>) => {
              const ds = item.dataset as unknown as CurveDataset;
              if (ds.kind === 'mean') {
                const m = item.raw as MeanPoint;
                return `${formatMolar(Math.pow(10, m.x))}: mean ${m.y.toFixed(1)} ± ${m.sd.toFixed(1)} % (n = ${m.n})`;
              }
              const p = item.raw as PlotPoint;
              const where = [p.well ? `well ${p.well}` : null, p.replicate !== null ? `replicate ${p.replicate}` : null].filter(Boolean).join(', ');
              const hint = this.interactive() ? (p.excluded ? ' · click to restore' : ' · click to exclude') : '';
              return `${formatMolar(p.molar)}: ${p.y.toFixed(1)} %${where ? ` (${where})` : ''}${p.excluded ? ', excluded' : ''}${hint}`;
            },
          },
        },
      },
    };
  });
}
