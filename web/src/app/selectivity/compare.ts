import { ChangeDetectionStrategy, Component, computed, inject, OnInit, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTooltipModule } from '@angular/material/tooltip';
import { ActivatedRoute, RouterLink } from '@angular/router';
import { forkJoin } from 'rxjs';
import { AuthStore } from '../auth/auth-store';
import { responseAxisLabel } from '../assays/assay-labels';
import { MatchDepiction } from '../compounds/compound-list/match-depiction';
import { saveFile } from '../compounds/save-file';
import { apiErrorMessage } from '../shared/api-error';
import { MoleculeView } from '../shared/molecule-view';
import type { SarColumn } from '../sar-table/sar-api';
import { OverlayChart, type OverlayCurve } from './overlay-chart';
import { SelectivityApi, type CompareCompound, type Comparison, type DecisionKind, type ResultWithCurve } from './selectivity-api';
import { bound, fold, scoreExplained } from './selectivity-format';

/** Colours of the compared compounds (ours; told apart by legend order and label too). */
const COLOURS = ['#0a7f86', '#b5651d', '#5b4b8a', '#2f7d32', '#a23b56', '#3d5a80'];

interface AssayCurves {
  assayId: number;
  title: string;
  yLabel: string;
  curves: OverlayCurve[];
}

/** 2 to 6 compounds side by side: structures, potency, efficacy and calls, curves overlaid, decisions. */
@Component({
  selector: 'lg-compare',
  imports: [FormsModule, RouterLink, MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatSelectModule, MatTooltipModule, MoleculeView, MatchDepiction, OverlayChart],
  templateUrl: './compare.html',
  styleUrl: './compare.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Compare implements OnInit {
  private readonly api = inject(SelectivityApi);
  private readonly route = inject(ActivatedRoute);
  private readonly snack = inject(MatSnackBar);
  protected readonly auth = inject(AuthStore);

  protected readonly comparison = signal<Comparison | null>(null);
  protected readonly error = signal<string | null>(null);
  protected readonly charts = signal<AssayCurves[] | null>(null);
  protected readonly drafts = signal<Record<number, { decision: DecisionKind | null; rationale: string; saving: boolean }>>({});
  protected readonly colours = COLOURS;
  protected readonly bound = bound;
  protected readonly fold = fold;
  protected readonly scoreExplained = scoreExplained;
  private project = '';
  private ids: number[] = [];

  /** Rows of the receptor table: each receptor's value and call columns in the pivot's order. */
  protected readonly valueRows = computed(() => {
    const c = this.comparison();
    if (!c) return [];
    return c.columns
      .filter((g) => g.targetId !== undefined)
      .flatMap((g) => g.children.filter((col) => col.kind === 'value' || col.kind === 'margin' || col.kind === 'call').map((col) => ({ group: g, col })));
  });

  ngOnInit(): void {
    const p = this.route.snapshot.queryParamMap;
    this.project = p.get('project') ?? '';
    this.ids = (p.get('compounds') ?? '').split(',').map(Number).filter((n) => Number.isInteger(n) && n > 0);
    this.api.compare(this.project, this.ids).subscribe({
      next: (c) => {
        this.comparison.set(c);
        this.drafts.set(Object.fromEntries(c.compounds.map((x) => [x.id, { decision: null, rationale: '', saving: false }])));
        this.loadCurves(c);
      },
      error: (err) => this.error.set(apiErrorMessage(err)),
    });
  }

  private loadCurves(c: Comparison): void {
    forkJoin(c.compounds.map((x) => this.api.curves(x.registryNumber))).subscribe({
      next: (lists) => {
        const byAssay = new Map<number, AssayCurves>();
        lists.forEach((results: ResultWithCurve[], i) => {
          for (const r of results) {
            if (!r.fit || !r.points?.length || r.isReference) continue;
            let entry = byAssay.get(r.assay.id);
            if (!entry) byAssay.set(r.assay.id, (entry = { assayId: r.assay.id, title: `${r.assay.code} · ${r.assay.readout}`, yLabel: responseAxisLabel(r.assay.kind), curves: [] }));
            const means = new Map<number, number[]>();
            for (const m of r.points) {
              if (m.control !== null || m.excluded || !m.concentrationM || m.normalised === null) continue;
              const x = Math.round(Math.log10(m.concentrationM) * 100) / 100;
              means.set(x, [...(means.get(x) ?? []), m.normalised]);
            }
            const pr = r.fit.params;
            const ok = [pr.bottom, pr.top, pr.logEC50, pr.hillSlope].every((e) => e.value !== null && Number.isFinite(e.value));
            entry.curves.push({
              label: `${c.compounds[i].registryNumber}${r.runDate ? ` (${r.runDate})` : ''}`,
              colour: COLOURS[i % COLOURS.length],
              params: ok ? { bottom: pr.bottom.value!, top: pr.top.value!, logEC50: pr.logEC50.value!, hillSlope: pr.hillSlope.value! } : null,
              means: [...means.entries()].map(([x, ys]) => ({ x, y: ys.reduce((s, v) => s + v, 0) / ys.length })),
            });
          }
        });
        this.charts.set([...byAssay.values()].sort((a, b) => a.title.localeCompare(b.title)));
      },
      error: () => this.charts.set([]),
    });
  }

  protected cellText(x: CompareCompound, col: SarColumn): string {
    if (col.kind === 'call') return x.calls[col.targetId!]?.call ?? '–';
    if (col.kind === 'margin') {
      const m = x.margins[col.targetId!];
      return m ? `${bound(m.value, m.qualifier)} (${fold(m.value)})` : '–';
    }
    const cell = x.cells[col.id];
    if (!cell || cell.value === null) return '–';
    const d = col.parameter === 'emax' ? 0 : 2;
    return `${bound(cell.value, cell.qualifier, d)}${cell.sd !== null ? ` ± ${cell.sd.toFixed(d)}` : ''} (${cell.n})`;
  }

  protected rowLabel(group: { header: string }, col: SarColumn): string {
    const target = group.header.split(' — ')[0];
    return `${target} · ${col.kind === 'margin' ? 'ΔpKi vs primary' : col.header}${col.assay ? ` · ${col.assay.readout}` : ''}`;
  }

  protected setDraft(id: number, patch: Partial<{ decision: DecisionKind | null; rationale: string; saving: boolean }>): void {
    this.drafts.update((d) => ({ ...d, [id]: { ...d[id], ...patch } }));
  }

  protected decide(x: CompareCompound): void {
    const c = this.comparison();
    const d = this.drafts()[x.id];
    if (!c || !d?.decision) return;
    this.setDraft(x.id, { saving: true });
    this.api.decide(c.project.id, x.id, d.decision, d.rationale).subscribe({
      next: (saved) => {
        this.comparison.update((cur) => cur && { ...cur, compounds: cur.compounds.map((y) => (y.id === x.id ? { ...y, decision: saved } : y)) });
        this.setDraft(x.id, { decision: null, rationale: '', saving: false });
        this.snack.open(`Recorded: ${saved.decision} for ${x.registryNumber}. Its chemist and pharmacologists were e-mailed.`, 'OK', { duration: 5000 });
      },
      error: (err) => {
        this.setDraft(x.id, { saving: false });
        this.snack.open(apiErrorMessage(err), 'OK', { duration: 8000 });
      },
    });
  }

  protected print(): void {
    window.print();
  }

  protected exportCsv(): void {
    this.api.compareCsv(this.project, this.ids).subscribe({
      next: (blob) => saveFile(blob, `${this.project.toLowerCase()}-comparison.csv`),
      error: (err) => this.snack.open(apiErrorMessage(err, 'The export failed; try again.'), 'OK', { duration: 8000 }),
    });
  }
}
