import { ChangeDetectionStrategy, Component, computed, inject, OnInit, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatSelectModule } from '@angular/material/select';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { Legend, LinearScale, LineElement, PointElement, ScatterController, Tooltip, type ChartData, type ChartOptions, type TooltipItem } from 'chart.js';
import { BaseChartDirective, provideCharts } from 'ng2-charts';
import { apiErrorMessage } from '../shared/api-error';
import { SelectivityApi, type Overview as OverviewData } from './selectivity-api';
import { bound, fold, scoreExplained } from './selectivity-format';

const DECISION_COLOURS: Record<string, string> = { progress: '#0a7f86', hold: '#b5651d', stop: '#a23b56', none: '#889393' };

/** The leads' landing page: where the project stands, what waits, what was decided, what ranks best. */
@Component({
  selector: 'lg-overview',
  imports: [RouterLink, MatButtonModule, MatFormFieldModule, MatIconModule, MatSelectModule, BaseChartDirective],
  providers: [provideCharts({ registerables: [ScatterController, LineElement, PointElement, LinearScale, Tooltip, Legend] })],
  templateUrl: './overview.html',
  styleUrl: './overview.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Overview implements OnInit {
  private readonly api = inject(SelectivityApi);
  private readonly route = inject(ActivatedRoute);
  private readonly router = inject(Router);

  protected readonly projects = signal<{ id: number; code: string; name: string }[]>([]);
  protected readonly data = signal<OverviewData | null>(null);
  protected readonly error = signal<string | null>(null);
  protected readonly bound = bound;
  protected readonly fold = fold;
  protected readonly scoreExplained = scoreExplained;

  protected readonly scatter = computed<ChartData<'scatter'>>(() => {
    const d = this.data();
    if (!d) return { datasets: [] };
    const groups: Record<string, { x: number; y: number; id: number; label: string }[]> = { progress: [], hold: [], stop: [], none: [] };
    for (const p of d.scatter) {
      if (p.margin === null) continue;
      groups[p.decision ?? 'none'].push({ x: p.potency, y: p.margin, id: p.id, label: p.registryNumber });
    }
    const xs = d.scatter.map((p) => p.potency);
    const lo = xs.length ? Math.min(...xs) - 0.3 : 5;
    const hi = xs.length ? Math.max(...xs) + 0.3 : 10;
    return {
      datasets: [
        ...Object.entries(groups).map(([k, pts]) => ({ label: k === 'none' ? 'undecided' : k, data: pts, backgroundColor: DECISION_COLOURS[k], borderColor: DECISION_COLOURS[k], pointRadius: 5, pointHoverRadius: 7 })),
        { label: `window (${fold(d.window)})`, data: [{ x: lo, y: d.window }, { x: hi, y: d.window }], showLine: true, pointRadius: 0, borderColor: '#bf3b30', borderDash: [6, 4], backgroundColor: '#bf3b30' },
      ],
    };
  });

  protected readonly options = computed<ChartOptions<'scatter'>>(() => ({
    responsive: true,
    maintainAspectRatio: false,
    animation: false,
    onClick: (_e, elements, chart) => {
      const el = elements[0];
      if (!el) return;
      const point = chart.data.datasets[el.datasetIndex].data[el.index] as { label?: string };
      if (point.label) this.router.navigate(['/compounds', point.label]);
    },
    plugins: {
      tooltip: { callbacks: { label: (item: TooltipItem<'scatter'>) => { const p = item.raw as { label?: string; x: number; y: number }; return p.label ? `${p.label}: pKi ${p.x.toFixed(2)}, margin ${p.y.toFixed(2)}` : ''; } } },
    },
    scales: {
      x: { title: { display: true, text: `pKi at ${this.data()?.primaryTarget?.geneSymbol ?? 'the primary target'}` } },
      y: { title: { display: true, text: 'worst margin (log units)' } },
    },
  }));

  ngOnInit(): void {
    this.api.projects().subscribe({
      next: (projects) => {
        this.projects.set(projects);
        const key = this.route.snapshot.queryParamMap.get('project') ?? projects[0]?.code ?? null;
        if (key) this.load(key);
      },
      error: (err) => this.error.set(apiErrorMessage(err)),
    });
  }

  protected load(project: string): void {
    this.router.navigate([], { relativeTo: this.route, replaceUrl: true, queryParams: { project } });
    this.api.overview(project).subscribe({
      next: (d) => {
        this.data.set(d);
        this.error.set(null);
      },
      error: (err) => this.error.set(apiErrorMessage(err)),
    });
  }
}
