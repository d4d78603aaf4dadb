import { DatePipe, DecimalPipe } from '@angular/common';
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
import { catchError, debounceTime, distinctUntilChanged, map, of, switchMap, tap } from 'rxjs';
import { AuthStore } from '../../auth/auth-store';
import { apiErrorMessage } from '../../shared/api-error';
import { MoleculeView } from '../../shared/molecule-view';
import { CompoundApi, type CompoundQuery, type CompoundSort, type CompoundSummary, type Series } from '../compound-api';

const SORTABLE: readonly string[] = ['registryNumber', 'name', 'mw', 'clogp', 'tpsa', 'heavyAtoms', 'createdAt'];

@Component({
  selector: 'lg-compound-list',
  imports: [
    DatePipe, DecimalPipe, ReactiveFormsModule, RouterLink, MatTableModule, MatSortModule, MatPaginatorModule, MatFormFieldModule, MatInputModule,
    MatSelectModule, MatButtonModule, MatIconModule, MatProgressBarModule, MatTooltipModule, MoleculeView,
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

  protected readonly columns = ['structure', 'registryNumber', 'name', 'formula', 'mw', 'clogp', 'tpsa', 'series', 'createdAt'];
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

  private readonly rows = signal<CompoundSummary[]>([]);
  private readonly totalCount = signal(0);
  private readonly seriesList = signal<Series[]>([]);
  protected readonly items = this.rows.asReadonly();
  protected readonly total = this.totalCount.asReadonly();
  protected readonly series = this.seriesList.asReadonly();
  protected readonly loading = signal(true);
  protected readonly loadError = signal<string | null>(null);
  private readonly reload = signal(0);

  protected readonly filtered = computed(() => this.query().trim() !== '' || this.seriesId() !== null);
  protected readonly searching = computed(() => this.query().trim() !== '');
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

  /** The page to fetch; `attempt` changes on "Try again" so the same query runs once more. */
  private readonly request = computed<{ query: CompoundQuery; attempt: number }>(() => ({
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
        }),
        switchMap(({ query }) =>
          this.api.list(query).pipe(
            catchError((err: unknown) => {
              this.loadError.set(apiErrorMessage(err, 'The compounds could not be loaded.'));
              return of(null);
            }),
          ),
        ),
        takeUntilDestroyed(),
      )
      .subscribe((page) => {
        this.loading.set(false);
        if (!page) return;
        this.rows.set(page.items);
        this.totalCount.set(page.total);
      });
  }

  /** The search, filter, sort and page live in the address, so a list view can be shared or returned to. */
  private readonly keepInUrl = effect(() => {
    const r = this.request().query;
    const queryParams = {
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
  }

  protected changeSort(sort: Sort): void {
    if (!SORTABLE.includes(sort.active)) return;
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

  private loadSeries(): void {
    this.api
      .series()
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (list) => this.seriesList.set(list), error: () => this.seriesList.set([]) });
  }
}
