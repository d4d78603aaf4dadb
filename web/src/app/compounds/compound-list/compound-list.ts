import { DatePipe, DecimalPipe } from '@angular/common';
import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, DestroyRef, effect, inject, OnInit, signal } from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { FormControl, ReactiveFormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSortModule, type Sort } from '@angular/material/sort';
import { MatTableModule } from '@angular/material/table';
import { MatTooltipModule } from '@angular/material/tooltip';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { catchError, concat, debounceTime, distinctUntilChanged, map, type Observable, of, switchMap, tap } from 'rxjs';
import { AuthStore } from '../../auth/auth-store';
import { apiErrorMessage, apiFieldProblems, type FieldProblem } from '../../shared/api-error';
import { MoleculeView } from '../../shared/molecule-view';
import { CompoundApi, type CompoundQuery, type CompoundSort, type CompoundSummary, type Project, type SearchResult, type SearchStats, type Series } from '../compound-api';
import { MatchDepiction } from './match-depiction';
import { isActive, looksLikeMolfile, readSpec, searchBody, specParams, type SearchSpec } from './search-spec';
import { StructureSearch, type SearchRequest } from './structure-search';

const SORTABLE: readonly string[] = ['registryNumber', 'name', 'mw', 'clogp', 'tpsa', 'heavyAtoms', 'createdAt'];
const COLUMNS = ['structure', 'registryNumber', 'name', 'formula', 'mw', 'clogp', 'tpsa', 'series', 'createdAt'];

/** A row: a compound, with what a structure search found in it. */
type Row = CompoundSummary & { match?: number[] | null; similarity?: number | null };

/** How the last structure search went (null for the plain list). */
interface SearchOutcome {
  complete: boolean;
  /** The page is shown and the total is being counted (a second request). */
  counting: boolean;
  totalAtMost: number | null;
  note: string | null;
  stats: SearchStats;
}

interface Answer {
  items: Row[];
  total: number;
  search: SearchOutcome | null;
}

const count = (n: number): string => n.toLocaleString('en-US');

function shortQuery(structure: string): string {
  if (looksLikeMolfile(structure)) return 'the drawn query';
  return structure.length > 48 ? `${structure.slice(0, 47)}…` : structure;
}

@Component({
  selector: 'lg-compound-list',
  imports: [
    DatePipe, DecimalPipe, ReactiveFormsModule, RouterLink, MatTableModule, MatSortModule, MatPaginatorModule, MatFormFieldModule, MatInputModule,
    MatSelectModule, MatButtonModule, MatIconModule, MatProgressBarModule, MatTooltipModule, MoleculeView, MatchDepiction, StructureSearch,
  ],
  templateUrl: './compound-list.html',
  styleUrl: './compound-list.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundList implements OnInit {
  private readonly api = inject(CompoundApi);
  private readonly destroyRef = inject(DestroyRef);
  private readonly store = inject(AuthStore);
  private readonly router = inject(Router);
  private readonly route = inject(ActivatedRoute);

  protected readonly canRegister = computed(() => {
    this.store.user();
    return this.store.can('register');
  });

  protected readonly searchControl = new FormControl('', { nonNullable: true });
  protected readonly seriesControl = new FormControl<number | null>(null);

  protected readonly query = signal('');
  protected readonly seriesId = signal<number | null>(null);
  protected readonly sort = signal<CompoundSort>('createdAt');
  protected readonly dir = signal<'asc' | 'desc'>('desc');
  protected readonly pageIndex = signal(0);
  protected readonly pageSize = signal(25);

  /** The structure search being shown (from the address or the panel's Search), else null. */
  protected readonly applied = signal<SearchSpec | null>(null);
  protected readonly panelOpen = signal(false);

  private readonly rows = signal<Row[]>([]);
  private readonly totalCount = signal(0);
  private readonly seriesList = signal<Series[]>([]);
  private readonly projectList = signal<Project[]>([]);
  private readonly outcome = signal<SearchOutcome | null>(null);
  protected readonly items = this.rows.asReadonly();
  protected readonly total = this.totalCount.asReadonly();
  protected readonly series = this.seriesList.asReadonly();
  protected readonly projects = this.projectList.asReadonly();
  protected readonly searchOutcome = this.outcome.asReadonly();
  protected readonly loading = signal(true);
  protected readonly loadError = signal<string | null>(null);
  /** What the server found wrong with the search (400): shown in the panel next to the fields. */
  protected readonly searchProblems = signal<FieldProblem[]>([]);
  protected readonly searchFailure = signal<string | null>(null);
  private readonly reload = signal(0);

  protected readonly structureSearch = computed(() => isActive(this.applied()));
  protected readonly similarityMode = computed(() => {
    const spec = this.applied();
    return isActive(spec) && spec.mode === 'similarity' && spec.structure.trim() !== '';
  });
  protected readonly columns = computed(() => (this.similarityMode() ? ['structure', 'similarity', ...COLUMNS.slice(1)] : COLUMNS));
  protected readonly filtered = computed(() => this.query().trim() !== '' || this.seriesId() !== null);
  protected readonly searching = computed(() => this.query().trim() !== '');
  protected readonly sortDisabled = computed(() => this.searching() || this.structureSearch());

  protected readonly orderNote = computed(() => {
    if (this.searchFailure()) return '';
    if (this.similarityMode()) return 'Most similar first; column sorting applies to the plain list.';
    if (this.structureSearch()) return this.searching() ? 'Closest text matches first; column sorting applies to the plain list.' : 'In registry-number order; column sorting applies to the plain list.';
    if (this.searching()) return 'Closest matches first; column sorting applies when the search box is empty.';
    return '';
  });

  /** One line on the closed panel saying what is searched. */
  protected readonly searchSummary = computed(() => {
    const s = this.applied();
    if (!isActive(s)) return 'Find compounds by a drawn or pasted structure, by similarity, or by properties.';
    const parts: string[] = [];
    if (s.structure.trim()) {
      parts.push(s.mode === 'similarity' ? `Similar to ${shortQuery(s.structure)} (at least ${s.threshold.toFixed(2)}, best ${count(s.limit)})` : `Contains ${shortQuery(s.structure)}`);
    }
    const project = this.projects().find((p) => p.id === s.projectId);
    if (s.projectId !== null) parts.push(`project ${project?.code ?? s.projectId}`);
    const series = this.series().find((x) => x.id === this.seriesId());
    if (series) parts.push(`series ${series.code}`);
    const range = (label: string, min: number | null, max: number | null) => {
      if (min !== null && max !== null) parts.push(`${label} ${min}–${max}`);
      else if (min !== null) parts.push(`${label} ≥ ${min}`);
      else if (max !== null) parts.push(`${label} ≤ ${max}`);
    };
    range('MW', s.mwMin, s.mwMax);
    range('cLogP', s.clogpMin, s.clogpMax);
    range('TPSA', null, s.tpsaMax);
    if (s.registeredFrom && s.registeredTo) parts.push(`registered ${s.registeredFrom} to ${s.registeredTo}`);
    else if (s.registeredFrom) parts.push(`registered from ${s.registeredFrom}`);
    else if (s.registeredTo) parts.push(`registered up to ${s.registeredTo}`);
    return parts.join(' · ');
  });

  /** "Screen kept 1,204 of 100,000; checked 1,204 atom by atom in 84 ms." */
  protected readonly statsLine = computed(() => {
    const o = this.outcome();
    const spec = this.applied();
    if (!o || !isActive(spec)) return '';
    const { considered, screened, checked, elapsedMs } = o.stats;
    if (o.counting && screened !== null && checked !== null) {
      return `Screen kept ${count(screened)} of ${count(considered)}; the first ${count(checked)} checked atom by atom in ${count(elapsedMs)} ms.`;
    }
    if (o.stats.reused && screened !== null) {
      return `Screen kept ${count(screened)} of ${count(considered)}; the hits were counted for this search earlier and nothing has changed since.`;
    }
    if (screened !== null && checked !== null) {
      return `Screen kept ${count(screened)} of ${count(considered)}; checked ${count(checked)} atom by atom in ${count(elapsedMs)} ms.`;
    }
    if (this.similarityMode()) {
      return `Fingerprints compared; kept those at ${spec.threshold.toFixed(2)} or more, at most ${count(spec.limit)}, in ${count(elapsedMs)} ms.`;
    }
    return `Filters applied in ${count(elapsedMs)} ms.`;
  });

  protected readonly totalLine = computed(() => {
    const n = this.total();
    const o = this.outcome();
    if (o?.counting) return `Counting the hits… (at most ${count(o.totalAtMost ?? n)}; this page is exact)`;
    const soFar = this.outcome()?.complete === false ? ' so far' : '';
    return `${count(n)} ${n === 1 ? 'compound' : 'compounds'} found${soFar}`;
  });
  protected readonly seriesName = computed(() => {
    const id = this.seriesId();
    const s = this.series().find((x) => x.id === id);
    return s ? `${s.code} ${s.name}` : '';
  });

  protected readonly noMatchText = computed(() => {
    const q = this.query();
    const s = this.seriesName();
    if (q && s) return `Nothing matches “${q}” in series ${s}.`;
    if (q) return `Nothing matches “${q}”.`;
    return `No compounds in series ${s} yet.`;
  });

  /** The page to fetch; `attempt` changes on "Try again" and "Search" so the same query runs once more. */
  private readonly request = computed<{ query: CompoundQuery; spec: SearchSpec | null; attempt: number }>(() => ({
    spec: this.applied(),
    query: {
      page: this.pageIndex() + 1,
      pageSize: this.pageSize(),
      sort: this.sort(),
      dir: this.dir(),
      seriesId: this.seriesId(),
      q: this.query(),
    },
    attempt: this.reload(),
  }));

  constructor() {
    toObservable(this.request)
      .pipe(
        tap(() => {
          this.loading.set(true);
          this.loadError.set(null);
          this.searchFailure.set(null);
        }),
        switchMap(({ query, spec }) =>
          this.fetch(query, spec).pipe(
            catchError((err: unknown) => {
              this.showFailure(err, isActive(spec));
              return of(null);
            }),
          ),
        ),
        takeUntilDestroyed(),
      )
      .subscribe((answer) => {
        this.loading.set(answer?.search?.counting === true);
        if (!answer) return;
        this.searchProblems.set([]);
        this.rows.set(answer.items);
        this.totalCount.set(answer.total);
        this.outcome.set(answer.search);
      });
  }

  /** The plain list (server sort) or, with a structure search, the search's page. */
  private fetch(query: CompoundQuery, spec: SearchSpec | null): Observable<Answer> {
    if (!isActive(spec)) return this.api.list(query).pipe(map((page) => ({ items: page.items, total: page.total, search: null })));
    const body = searchBody(spec, query.q ?? '', query.seriesId ?? null, query.page, query.pageSize);
    const answer = (r: SearchResult): Answer => ({
      items: r.items,
      total: r.total ?? r.totalAtMost ?? r.items.length,
      search: { complete: r.complete, counting: r.counting, totalAtMost: r.totalAtMost, note: r.note, stats: r.stats },
    });
    if (!body.substructure) return this.api.search(body).pipe(map(answer));
    // A substructure search shows its page as soon as it is known, then the exact total.
    return this.api.search({ ...body, count: 'first-page' }).pipe(
      switchMap((first) => (first.counting ? concat(of(answer(first)), this.api.search({ ...body, count: 'exact' }).pipe(map(answer))) : of(answer(first)))),
    );
  }

  /** A refused search (400) is shown at its fields in the panel; anything else offers "Try again". */
  private showFailure(err: unknown, search: boolean): void {
    if (search && err instanceof HttpErrorResponse && err.status === 400) {
      this.rows.set([]);
      this.totalCount.set(0);
      this.outcome.set(null);
      this.searchProblems.set(apiFieldProblems(err));
      this.searchFailure.set(apiErrorMessage(err));
      this.panelOpen.set(true);
      return;
    }
    this.loadError.set(apiErrorMessage(err, search ? 'The search could not be run.' : 'The compounds could not be loaded.'));
  }

  /** The search, filter, sort and page live in the address, so a list view can be shared or returned to. */
  private readonly keepInUrl = effect(() => {
    const { query: r, spec } = this.request();
    const queryParams = {
      ...specParams(spec),
      q: r.q || null,
      series: r.seriesId ?? null,
      sort: r.sort === 'createdAt' ? null : r.sort,
      dir: r.dir === 'desc' ? null : r.dir,
      page: r.page > 1 ? r.page : null,
      size: r.pageSize !== 25 ? r.pageSize : null,
    };
    void this.router.navigate([], { relativeTo: this.route, queryParams, replaceUrl: true });
  });

  ngOnInit(): void {
    this.readUrl();
    this.watchFilters();
    this.loadSeries();
    this.loadProjects();
  }

  private readUrl(): void {
    const p = this.route.snapshot.queryParamMap;
    const q = p.get('q') ?? '';
    const series = Number(p.get('series'));
    const sort = p.get('sort');
    const page = Number(p.get('page'));
    const size = Number(p.get('size'));
    if (q) {
      this.searchControl.setValue(q, { emitEvent: false });
      this.query.set(q);
    }
    if (Number.isInteger(series) && series > 0) {
      this.seriesControl.setValue(series, { emitEvent: false });
      this.seriesId.set(series);
    }
    if (sort && SORTABLE.includes(sort)) this.sort.set(sort as CompoundSort);
    if (p.get('dir') === 'asc') this.dir.set('asc');
    if ([10, 25, 50, 100].includes(size)) this.pageSize.set(size);
    if (Number.isInteger(page) && page > 1) this.pageIndex.set(page - 1);
    const spec = readSpec(p);
    if (spec) {
      this.applied.set(spec);
      this.panelOpen.set(true);
    }
  }

  protected togglePanel(): void {
    this.panelOpen.update((open) => !open);
  }

  /** The panel's Search: its structure, mode and filters replace the search shown, from page 1. */
  protected runSearch(request: SearchRequest): void {
    this.applied.set(isActive(request.spec) ? request.spec : null);
    this.seriesControl.setValue(request.seriesId, { emitEvent: false });
    this.seriesId.set(request.seriesId);
    this.pageIndex.set(0);
    this.searchProblems.set([]);
    this.reload.update((n) => n + 1);
  }

  /** Back to the plain list: no structure, filters or text. */
  protected clearSearch(): void {
    this.applied.set(null);
    this.searchControl.setValue('', { emitEvent: false });
    this.query.set('');
    this.seriesControl.setValue(null, { emitEvent: false });
    this.seriesId.set(null);
    this.pageIndex.set(0);
    this.searchProblems.set([]);
    this.searchFailure.set(null);
  }

  /** "Clear search" under an empty answer: closes the panel too, so it starts afresh when opened. */
  protected clearFromResults(): void {
    this.clearSearch();
    this.panelOpen.set(false);
  }

  protected changeSort(sort: Sort): void {
    if (!SORTABLE.includes(sort.active) || this.structureSearch()) return;
    this.sort.set(sort.direction ? (sort.active as CompoundSort) : 'createdAt');
    this.dir.set(sort.direction || 'desc');
    this.pageIndex.set(0);
  }

  protected changePage(event: PageEvent): void {
    this.pageIndex.set(event.pageIndex);
    this.pageSize.set(event.pageSize);
  }

  protected clearFilters(): void {
    this.searchControl.setValue('');
    this.seriesControl.setValue(null);
  }

  protected retry(): void {
    this.reload.update((n) => n + 1);
  }

  private watchFilters(): void {
    this.searchControl.valueChanges
      .pipe(
        map((v) => v.trim()),
        debounceTime(300),
        distinctUntilChanged(),
        takeUntilDestroyed(this.destroyRef),
      )
      .subscribe((q) => {
        this.query.set(q);
        this.pageIndex.set(0);
      });
    this.seriesControl.valueChanges.pipe(takeUntilDestroyed(this.destroyRef)).subscribe((id) => {
      this.seriesId.set(id);
      this.pageIndex.set(0);
    });
  }

  private loadProjects(): void {
    this.api
      .projects()
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (list) => this.projectList.set(list), error: () => this.projectList.set([]) });
  }

  private loadSeries(): void {
    this.api
      .series()
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (list) => this.seriesList.set(list), error: () => this.seriesList.set([]) });
  }
}
