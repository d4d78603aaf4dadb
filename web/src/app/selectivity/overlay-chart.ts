import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { Legend, LinearScale, LineElement, PointElement, ScatterController, Tooltip, type ChartData, type ChartOptions } from 'chart.js';
import { BaseChartDirective, provideCharts } from 'ng2-charts';

/** One compound's curve in an assay: its fitted 4PL parameters and the mean response per concentration. */
export interface OverlayCurve {
  label: string;
  colour: string;
  params: { bottom: number; top: number; logEC50: number; hillSlope: number } | null;
  means: { x: number; y: number }[];
}

const fourPL = (x: number, p: NonNullable<OverlayCurve['params']>) => p.bottom + (p.top - p.bottom) / (1 + Math.pow(10, (p.logEC50 - x) * p.hillSlope));

/** Several compounds' concentration–response curves in one assay, overlaid. */
@Component({
  selector: 'lg-overlay-chart',
  imports: [BaseChartDirective],
  providers: [provideCharts({ registerables: [ScatterController, LineElement, PointElement, LinearScale, Tooltip, Legend] })],
  template: `<canvas baseChart type="scatter" [data]="data()" [options]="options()" role="img" [attr.aria-label]="label()"></canvas>`,
  styles: `
    :host { display: block; position: relative; height: 240px; min-width: 0; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class OverlayChart {
  readonly curves = input.required<OverlayCurve[]>();
  readonly yLabel = input('Response (%)');
  readonly label = input('Concentration–response curves, overlaid');

  protected readonly data = computed<ChartData<'scatter'>>(() => {
    const xs = this.curves().flatMap((c) => c.means.map((m) => m.x));
    const lo = xs.length ? Math.min(...xs) - 0.5 : -11;
    const hi = xs.length ? Math.max(...xs) + 0.5 : -4;
    const datasets: ChartData<'scatter'>['datasets'] = [];
    for (const c of this.curves()) {
      datasets.push({ label: c.label, data: c.means, backgroundColor: c.colour, borderColor: c.colour, pointRadius: 3, showLine: false });
      if (c.params) {
        const pts = Array.from({ length: 80 }, (_, i) => lo + ((hi - lo) * i) / 79).map((x) => ({ x, y: fourPL(x, c.params!) }));
        datasets.push({ label: `${c.label} fit`, data: pts, borderColor: c.colour, backgroundColor: c.colour, showLine: true, pointRadius: 0, borderWidth: 2 });
      }
    }
    return { datasets };
  });

  protected readonly options = computed<ChartOptions<'scatter'>>(() => ({
    responsive: true,
    maintainAspectRatio: false,
    animation: false,
    plugins: { legend: { labels: { filter: (item) => !item.text.endsWith(' fit'), boxWidth: 10, font: { size: 11 } } } },
    scales: {
      x: { title: { display: true, text: 'log [compound] (M)' } },
      y: { title: { display: true, text: this.yLabel() } },
    },
  }));
}
