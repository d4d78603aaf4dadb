import { ChangeDetectionStrategy, Component, computed, inject, OnInit, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTooltipModule } from '@angular/material/tooltip';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { AuthStore } from '../auth/auth-store';
import { saveFile } from '../compounds/save-file';
import { apiErrorMessage } from '../shared/api-error';
import { MoleculeView } from '../shared/molecule-view';
import { SelectivityApi, type Matrix, type MatrixRow, type Ranking } from './selectivity-api';
import { bound, fold, marginColours, marginGradient, scoreExplained } from './selectivity-format';

type SortKey = 'worst' | 'score' | 'primary' | 'number';

const CALLS = ['full agonist', 'partial agonist', 'neutral antagonist', 'inverse agonist', 'positive allosteric modulator', 'negative allosteric modulator', 'allosteric agonist'];

/** Compounds × the panel's receptors: margins against the primary target, calls, score, decisions. */
@Component({
  selector: 'lg-selectivity-matrix',
  imports: [FormsModule, RouterLink, MatButtonModule, MatCheckboxModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule, MatSelectModule, MatTooltipModule, MoleculeView],
  templateUrl: './selectivity-matrix.html',
  styleUrl: './selectivity-matrix.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SelectivityMatrix implements OnInit {
  private readonly api = inject(SelectivityApi);
  private readonly route = inject(ActivatedRoute);
  private readonly router = inject(Router);
  private readonly snack = inject(MatSnackBar);
  protected readonly auth = inject(AuthStore);

  protected readonly projects = signal<{ id: number; code: string; name: string }[]>([]);
  protected readonly project = signal<string | null>(null);
  protected readonly matrix = signal<Matrix | null>(null);
  protected readonly loading = signal(false);
  protected readonly error = signal<string | null>(null);
  protected readonly sort = signal<{ key: SortKey; dir: 1 | -1 }>({ key: 'worst', dir: 1 });
  protected readonly selected = signal<ReadonlySet<number>>(new Set());
  protected readonly editing = signal(false);
  protected readonly draft = signal<{ window: number; ranking: Ranking }>({ window: 2, ranking: { potency: 1, margin: 1, lipe: 0.5, requiredCalls: [] } });
  protected readonly calls = CALLS;
  protected readonly gradient = marginGradient();
  protected readonly bound = bound;
  protected readonly fold = fold;
  protected readonly scoreExplained = scoreExplained;

  protected readonly antiTargets = computed(() => (this.matrix()?.targets ?? []).filter((t) => t.id !== this.matrix()?.primaryTarget?.id));

  protected readonly rows = computed(() => {
    const rows = [...(this.matrix()?.rows ?? [])];
    const { key, dir } = this.sort();
    const val = (r: MatrixRow): number | string | null =>
      key === 'worst' ? r.worstMargin?.value ?? null : key === 'score' ? r.score.score : key === 'primary' ? r.primary?.value ?? null : r.compound.registryNumber;
    return rows.sort((a, b) => {
      const x = val(a);
      const y = val(b);
      if (x === null && y === null) return 0;
      if (x === null) return 1; // missing values last, whatever the direction
      if (y === null) return -1;
      return (x < y ? -1 : x > y ? 1 : 0) * dir;
    });
  });

  protected readonly canDecide = computed(() => this.auth.can('decide'));

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
    this.project.set(project);
    this.selected.set(new Set());
    this.loading.set(true);
    this.router.navigate([], { relativeTo: this.route, replaceUrl: true, queryParams: { project } });
    this.api.matrix(project).subscribe({
      next: (m) => {
        this.matrix.set(m);
        this.draft.set({ window: m.window, ranking: { ...m.ranking } });
        this.loading.set(false);
        this.error.set(null);
      },
      error: (err) => {
        this.loading.set(false);
        this.error.set(apiErrorMessage(err));
      },
    });
  }

  protected sortBy(key: SortKey): void {
    const s = this.sort();
    this.sort.set({ key, dir: s.key === key ? (s.dir === 1 ? -1 : 1) : key === 'score' || key === 'primary' ? -1 : 1 });
  }

  protected ariaSort(key: SortKey): 'ascending' | 'descending' | 'none' {
    const s = this.sort();
    return s.key !== key ? 'none' : s.dir === 1 ? 'ascending' : 'descending';
  }

  protected toggle(id: number, on: boolean): void {
    const next = new Set(this.selected());
    if (on) next.add(id);
    else next.delete(id);
    this.selected.set(next);
  }

  protected compare(): void {
    const ids = [...this.selected()];
    this.router.navigate(['/selectivity/compare'], { queryParams: { project: this.project(), compounds: ids.join(',') } });
  }

  protected marginStyle(value: number | undefined | null): Record<string, string> | null {
    const m = this.matrix();
    return value === null || value === undefined || !m ? null : marginColours(value, m.window);
  }

  protected setDraft(patch: Partial<{ window: number } & Ranking>): void {
    const d = this.draft();
    const { window, ...ranking } = patch;
    this.draft.set({ window: window ?? d.window, ranking: { ...d.ranking, ...ranking } });
  }

  protected saveSettings(): void {
    const m = this.matrix();
    if (!m) return;
    const d = this.draft();
    this.api.settings(m.project.id, { selectivityWindow: d.window, ranking: d.ranking }).subscribe({
      next: () => {
        this.editing.set(false);
        this.snack.open('Settings saved: margins and scores recomputed.', 'OK', { duration: 4000 });
        this.load(m.project.code);
      },
      error: (err) => this.snack.open(apiErrorMessage(err), 'OK', { duration: 8000 }),
    });
  }

  protected exportCsv(): void {
    const project = this.project();
    if (!project) return;
    this.api.matrixCsv(project).subscribe({
      next: (blob) => saveFile(blob, `${project.toLowerCase()}-selectivity.csv`),
      error: (err) => this.snack.open(apiErrorMessage(err, 'The export failed; try again.'), 'OK', { duration: 8000 }),
    });
  }
}
