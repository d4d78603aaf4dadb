import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, OnInit, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatMenuModule } from '@angular/material/menu';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTooltipModule } from '@angular/material/tooltip';
import { ActivatedRoute, Router } from '@angular/router';
import { AgGridAngular } from 'ag-grid-angular';
import {
  AllCommunityModule,
  ModuleRegistry,
  themeQuartz,
  type CellClassParams,
  type CellClickedEvent,
  type CellKeyDownEvent,
  type ColDef,
  type ColGroupDef,
  type ColumnState,
  type FilterModel,
  type FullWidthCellKeyDownEvent,
  type GridApi,
  type GridReadyEvent,
  type IRowNode,
  type PostSortRowsParams,
  type RowClassParams,
  type ValueFormatterParams,
} from 'ag-grid-community';
import Fuse from 'fuse.js';
import { EMPTY, Subject, catchError, forkJoin, of, switchMap, tap } from 'rxjs';
import { AuthStore } from '../auth/auth-store';
import { ConfirmDialog, type ConfirmData } from '../shared/confirm-dialog';
import { apiErrorMessage } from '../shared/api-error';
import { saveFile } from '../compounds/save-file';
import { CellResultsDialog, type CellResultsData } from './cell-results-dialog';
import { CellTooltip, CompoundCell, RGroupCell, StructureCell } from './sar-cells';
import { callRenderer, marginRenderer, valueRenderer } from './sar-renderers';
import { scaleColours, scaleGradient, scalePosition, SCALE_DOMAIN } from './sar-colours';
import { DECIMALS, qualified, WINDOW_WORDS } from './sar-format';
import { PARAMETER_CHOICES, SarApi, type SarColumn, type SarChoice, type SarParameter, type SarQuery, type SarRow, type SarTable as Table, type SavedView, type ViewState } from './sar-api';
import { SaveViewDialog, type SaveViewData } from './save-view-dialog';
import { SubstructureDialog } from './substructure-dialog';
import { SeriesCoresDialog } from './series-cores-dialog';

ModuleRegistry.registerModules([AllCommunityModule]);

const DEFAULT_PARAMETERS: SarChoice[] = ['pKi', 'pEC50', 'alpha', 'call'];
const PARAM_KEYS = new Set<string>(PARAMETER_CHOICES.map((p) => p.key));

/** Grid theme: ag-grid's neutral base with Ligandry's type and palette (web/src/theme/_palettes.scss). */
const GRID_THEME = themeQuartz.withParams({
  fontFamily: 'inherit',
  fontSize: 13,
  headerFontWeight: 600,
  accentColor: '#0a7f86',
  headerBackgroundColor: '#eef3f3',
  rowHoverColor: 'rgba(10, 127, 134, 0.06)',
  borderColor: '#d5dcdc',
  wrapperBorderRadius: 8,
});

const ids = (text: string | null): number[] => (text ? text.split(',').map(Number).filter((n) => Number.isInteger(n) && n > 0) : []);

/** A column the chooser lists: id, label and the group it sits in. */
interface Choosable {
  id: string;
  label: string;
  group: string;
}

@Component({
  selector: 'lg-sar-table',
  imports: [
    FormsModule, AgGridAngular, MatButtonModule, MatButtonToggleModule, MatCheckboxModule, MatFormFieldModule, MatIconModule, MatInputModule,
    MatMenuModule, MatProgressBarModule, MatSelectModule, MatTooltipModule,
  ],
  templateUrl: './sar-table.html',
  styleUrl: './sar-table.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SarTable implements OnInit {
  private readonly api = inject(SarApi);
  private readonly route = inject(ActivatedRoute);
  private readonly router = inject(Router);
  private readonly dialog = inject(MatDialog);
  private readonly snack = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  protected readonly auth = inject(AuthStore);

  protected readonly theme = GRID_THEME;
  protected readonly parameterChoices = PARAMETER_CHOICES;
  protected readonly legendGradient = scaleGradient();
  protected readonly legendRanges = [
    { label: 'p-values', from: SCALE_DOMAIN.pKi[0], to: SCALE_DOMAIN.pKi[1] },
    { label: 'Emax %', from: SCALE_DOMAIN.emax[0], to: SCALE_DOMAIN.emax[1] },
    { label: 'α', from: SCALE_DOMAIN.alpha[0], to: SCALE_DOMAIN.alpha[1] },
  ];

  protected readonly projects = signal<{ id: number; code: string; name: string }[]>([]);
  protected readonly seriesChoices = signal<{ id: number; code: string; name: string }[]>([]);
  protected readonly targetChoices = signal<{ id: number; name: string; geneSymbol: string; species: string }[]>([]);
  protected readonly query = signal<SarQuery | null>(null);
  protected readonly table = signal<Table | null>(null);
  protected readonly loading = signal(false);
  protected readonly error = signal<string | null>(null);
  protected readonly quickText = signal('');
  protected readonly substructureDraft = signal('');
  protected readonly views = signal<SavedView[]>([]);
  protected readonly activeView = signal<SavedView | null>(null);
  protected readonly shown = signal<number | null>(null);
  protected readonly hidden = signal<ReadonlySet<string>>(new Set());
  protected readonly exporting = signal(false);

  private gridApi: GridApi<SarRow> | null = null;
  /** Column layout and filters to apply once the next table arrives (a saved view being opened). */
  private pendingLayout: { columnState: ColumnState[]; filterModel: FilterModel } | null = null;
  private readonly load$ = new Subject<SarQuery>();

  protected readonly project = computed(() => {
    const q = this.query();
    return q ? this.projects().find((p) => p.code === q.project || String(p.id) === q.project) ?? null : null;
  });

  /** Fuzzy matches of the quick text over numbers, names, aliases, series and R-groups (fuse.js). */
  private readonly quickIds = computed<ReadonlySet<number> | null>(() => {
    const text = this.quickText().trim();
    const rows = this.table()?.rows ?? [];
    if (!text) return null;
    const fuse = new Fuse(
      rows.map((r) => ({ id: r.id, registryNumber: r.registryNumber, name: r.name ?? '', aliases: r.aliases, series: r.seriesCode, rgroups: Object.values(r.rgroups ?? {}) })),
      { keys: ['registryNumber', 'name', 'aliases', 'series', 'rgroups'], threshold: 0.3, ignoreLocation: true },
    );
    return new Set(fuse.search(text).map((m) => m.item.id));
  });

  protected readonly columnDefs = computed<(ColDef<SarRow> | ColGroupDef<SarRow>)[]>(() => {
    const t = this.table();
    return t ? this.buildColumns(t) : [];
  });

  protected readonly choosable = computed<Choosable[]>(() =>
    (this.table()?.columns ?? []).flatMap((g) =>
      g.children.filter((c) => c.id !== 'structure' && c.id !== 'registryNumber').map((c) => ({ id: c.id, label: c.header, group: g.header })),
    ),
  );

  protected readonly targetLabel = (id: number) => this.table()?.targets.find((t) => t.id === id)?.geneSymbol ?? `target ${id}`;

  protected readonly gridOptions = {
    rowHeight: 92,
    headerHeight: 36,
    groupHeaderHeight: 40,
    tooltipShowDelay: 350,
    tooltipInteraction: true,
    animateRows: false,
    suppressDragLeaveHidesColumns: true,
    isExternalFilterPresent: () => this.quickIds() !== null,
    doesExternalFilterPass: (node: IRowNode<SarRow>) => this.quickIds()?.has(node.data!.id) ?? true,
    // Rows stay grouped by series: whatever the sort, series keep their order and rows sort within them.
    postSortRows: (params: PostSortRowsParams<SarRow>) => {
      const order = new Map((this.table()?.series ?? []).map((s, i) => [s.id, i]));
      params.nodes.sort((a, b) => (order.get(a.data!.seriesId) ?? 0) - (order.get(b.data!.seriesId) ?? 0));
    },
    getRowClass: (params: RowClassParams<SarRow>) => {
      const i = params.node.rowIndex ?? 0;
      const prev = i > 0 ? params.api.getDisplayedRowAtIndex(i - 1) : null;
      return !prev || prev.data?.seriesId !== params.data?.seriesId ? 'lg-series-start' : undefined;
    },
    getRowId: (params: { data: SarRow }) => String(params.data.id),
  };

  constructor() {
    this.load$
      .pipe(
        tap(() => {
          this.loading.set(true);
          this.error.set(null);
        }),
        switchMap((q) =>
          this.api.table(q).pipe(
            catchError((err) => {
              this.error.set(apiErrorMessage(err));
              this.loading.set(false);
              return EMPTY;
            }),
          ),
        ),
        takeUntilDestroyed(this.destroyRef),
      )
      .subscribe((t) => {
        this.table.set(t);
        this.loading.set(false);
        this.afterTable();
      });
  }

  ngOnInit(): void {
    forkJoin({ projects: this.api.projects(), targets: this.api.targets().pipe(catchError(() => of([]))) }).subscribe({
      next: ({ projects, targets }) => {
        this.projects.set(projects);
        this.targetChoices.set(targets);
        this.startFromAddress();
      },
      error: (err) => this.error.set(apiErrorMessage(err)),
    });
  }

  /** Reads the table's state from the address (so a link shares it), defaulting to the first project. */
  private startFromAddress(): void {
    const p = this.route.snapshot.queryParamMap;
    const projectKey = p.get('project') ?? this.projects()[0]?.code ?? null;
    if (!projectKey) return;
    const parameters = (p.get('parameters')?.split(',') ?? DEFAULT_PARAMETERS).filter((k): k is SarChoice => PARAM_KEYS.has(k));
    const q: SarQuery = {
      project: projectKey,
      seriesIds: ids(p.get('series')),
      targetIds: ids(p.get('targets')),
      parameters: parameters.length ? parameters : DEFAULT_PARAMETERS,
      substructure: p.get('substructure'),
      includeSubmitted: p.get('status') === 'submitted',
    };
    this.quickText.set(p.get('q') ?? '');
    this.substructureDraft.set(q.substructure ?? '');
    this.loadProjectLists(q, Number(p.get('view')) || null);
  }

  private loadProjectLists(q: SarQuery, viewId: number | null): void {
    const project = this.projects().find((x) => x.code === q.project || String(x.id) === q.project);
    if (!project) {
      this.error.set(`No project ${q.project}.`);
      return;
    }
    forkJoin({ series: this.api.series(project.id), views: this.api.views(project.id) }).subscribe({
      next: ({ series, views }) => {
        this.seriesChoices.set(series);
        this.views.set(views);
        const view = viewId ? views.find((v) => v.id === viewId) ?? null : null;
        if (view) this.openView(view, q.project);
        else this.run(q);
      },
      error: (err) => this.error.set(apiErrorMessage(err)),
    });
  }

  /** Asks the server for the table and keeps the query in the address. */
  private run(q: SarQuery): void {
    this.query.set(q);
    this.writeAddress();
    this.load$.next(q);
  }

  private writeAddress(): void {
    const q = this.query();
    if (!q) return;
    this.router.navigate([], {
      relativeTo: this.route,
      replaceUrl: true,
      queryParams: {
        project: q.project,
        series: q.seriesIds.length ? q.seriesIds.join(',') : null,
        targets: q.targetIds.length ? q.targetIds.join(',') : null,
        parameters: q.parameters.join(','),
        substructure: q.substructure || null,
        status: q.includeSubmitted ? 'submitted' : null,
        q: this.quickText() || null,
        view: this.activeView()?.id ?? null,
      },
    });
  }

  private change(patch: Partial<SarQuery>): void {
    const q = this.query();
    if (q) this.run({ ...q, ...patch });
  }

  protected chooseProject(code: string): void {
    this.activeView.set(null);
    this.substructureDraft.set('');
    this.loadProjectLists({ project: code, seriesIds: [], targetIds: [], parameters: this.query()?.parameters ?? DEFAULT_PARAMETERS, substructure: null, includeSubmitted: false }, null);
  }

  protected chooseSeries(seriesIds: number[]): void {
    this.change({ seriesIds });
  }

  /** Receptors shown: the project panel unless the user picks others. */
  protected chooseTargets(targetIds: number[]): void {
    this.change({ targetIds });
  }

  protected readonly shownTargetIds = computed(() => {
    const q = this.query();
    if (q?.targetIds.length) return q.targetIds;
    return this.table()?.targets.map((t) => t.id) ?? [];
  });

  protected readonly parameterLabels = computed(() =>
    (this.query()?.parameters ?? []).map((k) => PARAMETER_CHOICES.find((p) => p.key === k)?.label ?? k).join(', '),
  );

  protected readonly targetLabels = computed(() => {
    const chosen = new Set(this.shownTargetIds());
    return this.targetChoices().filter((t) => chosen.has(t.id)).map((t) => t.geneSymbol).join(', ');
  });

  protected chooseParameters(parameters: SarChoice[]): void {
    if (!parameters.length) {
      this.snack.open('Keep at least one parameter.', 'OK', { duration: 4000 });
      return;
    }
    const order = PARAMETER_CHOICES.map((p) => p.key);
    this.change({ parameters: [...parameters].sort((a, b) => order.indexOf(a) - order.indexOf(b)) });
  }

  protected chooseStatus(includeSubmitted: boolean): void {
    this.change({ includeSubmitted });
  }

  protected applySubstructure(): void {
    const text = this.substructureDraft().trim();
    this.change({ substructure: text || null });
  }

  protected clearSubstructure(): void {
    this.substructureDraft.set('');
    this.change({ substructure: null });
  }

  protected drawSubstructure(): void {
    this.dialog
      .open(SubstructureDialog, { data: { initial: this.query()?.substructure ?? null }, maxWidth: '95vw' })
      .afterClosed()
      .subscribe((text: string | undefined) => {
        if (!text) return;
        this.substructureDraft.set(text);
        this.change({ substructure: text });
      });
  }

  protected setQuickText(text: string): void {
    this.quickText.set(text);
    this.gridApi?.onFilterChanged();
    this.writeAddress();
  }

  protected onGridReady(event: GridReadyEvent<SarRow>): void {
    this.gridApi = event.api;
    this.afterTable();
  }

  /** After new data: apply a pending saved layout, re-run the quick filter, count what is shown. */
  private afterTable(): void {
    const api = this.gridApi;
    if (!api || !this.table()) return;
    // The grid takes the new column definitions in the same change detection; wait one turn.
    setTimeout(() => {
      if (this.pendingLayout) {
        api.applyColumnState({ state: this.pendingLayout.columnState, applyOrder: true });
        api.setFilterModel(this.pendingLayout.filterModel);
        this.pendingLayout = null;
      }
      api.onFilterChanged();
      this.readHidden();
      this.countShown();
    });
  }

  /** Row classes (the line above each series) depend on neighbours: redraw after a sort or filter. */
  protected redraw(): void {
    this.gridApi?.redrawRows();
  }

  protected countShown(): void {
    this.shown.set(this.gridApi?.getDisplayedRowCount() ?? null);
  }

  protected readHidden(): void {
    const state = this.gridApi?.getColumnState() ?? [];
    this.hidden.set(new Set(state.filter((c) => c.hide).map((c) => c.colId)));
  }

  protected toggleColumn(id: string, visible: boolean): void {
    this.gridApi?.setColumnsVisible([id], visible);
    this.readHidden();
  }

  protected resetLayout(): void {
    this.gridApi?.resetColumnState();
    this.gridApi?.setFilterModel(null);
    this.readHidden();
  }

  protected onCellClicked(event: CellClickedEvent<SarRow>): void {
    this.openCell(event.colDef.colId ?? '', event.data);
  }

  protected onCellKeyDown(event: CellKeyDownEvent<SarRow> | FullWidthCellKeyDownEvent<SarRow>): void {
    const key = (event.event as KeyboardEvent | undefined)?.key;
    if (key === 'Enter' && 'colDef' in event) this.openCell(event.colDef.colId ?? '', event.data);
  }

  /** A value cell opens its results with their curves. */
  private openCell(colId: string, row: SarRow | undefined): void {
    const t = this.table();
    const column = t?.columns.flatMap((g) => g.children).find((c) => c.id === colId && c.kind === 'value');
    if (!column?.parameter || !row || !t) return;
    const parameter = column.parameter;
    const cell = row.cells[colId] ?? null;
    if (!cell) return;
    const data: CellResultsData = {
      compoundId: row.id,
      registryNumber: row.registryNumber,
      column: colId,
      heading: this.headingOf(column),
      parameter,
      parameterLabel: t.parameters.find((p) => p.key === parameter)?.label ?? parameter,
      cell,
      includeSubmitted: t.includeSubmitted,
    };
    this.dialog.open(CellResultsDialog, { data, width: '960px', maxWidth: '95vw' });
  }

  /** Series cores for R-group decomposition (chemists); the table reloads when one changed. */
  protected editCores(): void {
    const t = this.table();
    const project = this.project();
    if (!t || !project) return;
    this.api.series(project.id).subscribe((all) => {
      const cores = new Map(t.series.map((s) => [s.id, s.core]));
      const series = all.map((s) => ({ ...s, core: (s as { core?: string | null }).core ?? cores.get(s.id) ?? null }));
      this.dialog
        .open(SeriesCoresDialog, { data: { series }, width: '760px', maxWidth: '95vw' })
        .afterClosed()
        .subscribe((changed) => {
          const q = this.query();
          if (changed && q) this.run(q);
        });
    });
  }

  // Saved views ---------------------------------------------------------------------------------

  private currentState(): ViewState | null {
    const q = this.query();
    if (!q || !this.gridApi) return null;
    return {
      seriesIds: q.seriesIds,
      targetIds: q.targetIds,
      parameters: q.parameters,
      substructure: q.substructure,
      text: this.quickText() || null,
      includeSubmitted: q.includeSubmitted,
      columnState: this.gridApi.getColumnState() as unknown as Record<string, unknown>[],
      filterModel: this.gridApi.getFilterModel() as Record<string, unknown>,
    };
  }

  protected openViewById(id: number): void {
    this.openView(this.views().find((v) => v.id === id) ?? null);
  }

  /** Opens a saved view (null: the project's default table) of `project` (the current one by default). */
  protected openView(view: SavedView | null, project = this.query()?.project ?? ''): void {
    this.activeView.set(view);
    if (!view) {
      this.pendingLayout = { columnState: [], filterModel: {} };
      this.gridApi?.resetColumnState();
      this.quickText.set('');
      this.substructureDraft.set('');
      this.run({ project, seriesIds: [], targetIds: [], parameters: DEFAULT_PARAMETERS, substructure: null, includeSubmitted: false });
      return;
    }
    const s = view.state;
    this.pendingLayout = { columnState: s.columnState as unknown as ColumnState[], filterModel: s.filterModel as FilterModel };
    this.quickText.set(s.text ?? '');
    this.substructureDraft.set(s.substructure ?? '');
    this.run({ project, seriesIds: s.seriesIds, targetIds: s.targetIds, parameters: s.parameters, substructure: s.substructure, includeSubmitted: s.includeSubmitted });
  }

  protected saveViewAs(): void {
    const project = this.project();
    const state = this.currentState();
    if (!project || !state) return;
    const data: SaveViewData = { projectName: project.name, name: '', shared: false };
    this.dialog
      .open(SaveViewDialog, { data, width: '460px' })
      .afterClosed()
      .pipe(switchMap((r: { name: string; shared: boolean } | undefined) => (r ? this.api.saveView(project.id, r.name, r.shared, state) : EMPTY)))
      .subscribe({
        next: (view) => {
          this.views.update((list) => [...list, view].sort((a, b) => a.name.localeCompare(b.name)));
          this.activeView.set(view);
          this.writeAddress();
          this.snack.open(`Saved view "${view.name}"${view.shared ? ', shared with the project' : ''}.`, 'OK', { duration: 4000 });
        },
        error: (err) => this.snack.open(apiErrorMessage(err), 'OK', { duration: 8000 }),
      });
  }

  protected updateView(): void {
    const view = this.activeView();
    const state = this.currentState();
    if (!view || !state) return;
    this.api.updateView(view, { state }).subscribe({
      next: (saved) => {
        this.views.update((list) => list.map((v) => (v.id === saved.id ? saved : v)));
        this.activeView.set(saved);
        this.snack.open(`Updated view "${saved.name}".`, 'OK', { duration: 4000 });
      },
      error: (err) => this.snack.open(apiErrorMessage(err), 'OK', { duration: 8000 }),
    });
  }

  protected deleteView(): void {
    const view = this.activeView();
    if (!view) return;
    const data: ConfirmData = { title: 'Delete this view?', message: `The saved view "${view.name}" will be deleted${view.shared ? ' for everyone on the project' : ''}. The data it shows stays.`, confirm: 'Delete view', danger: true };
    this.dialog
      .open(ConfirmDialog, { data })
      .afterClosed()
      .pipe(switchMap((ok) => (ok ? this.api.deleteView(view.id) : EMPTY)))
      .subscribe({
        next: () => {
          this.views.update((list) => list.filter((v) => v.id !== view.id));
          this.activeView.set(null);
          this.writeAddress();
          this.snack.open(`Deleted view "${view.name}".`, 'OK', { duration: 4000 });
        },
        error: (err) => this.snack.open(apiErrorMessage(err), 'OK', { duration: 8000 }),
      });
  }

  // Exports -------------------------------------------------------------------------------------

  protected exportAs(kind: 'csv' | 'sdf'): void {
    const q = this.query();
    const api = this.gridApi;
    const t = this.table();
    if (!q || !api || !t) return;
    const columns = api.getAllDisplayedColumns().map((c) => c.getColId());
    const compounds: number[] = [];
    api.forEachNodeAfterFilterAndSort((node) => node.data && compounds.push(node.data.id));
    this.exporting.set(true);
    this.api.export(kind, { ...q, columns, compounds }).subscribe({
      next: (blob) => {
        this.exporting.set(false);
        saveFile(blob, `${t.project.code.toLowerCase()}-sar.${kind}`);
      },
      error: (err) => {
        this.exporting.set(false);
        this.snack.open(apiErrorMessage(err, 'The export failed; try again.'), 'OK', { duration: 8000 });
      },
    });
  }

  // Columns -------------------------------------------------------------------------------------

  /** "HTR1A · pEC50 · T1A-CAMP (cAMP)": what a value column holds, in words. */
  private headingOf(c: SarColumn): string {
    const target = c.targetId !== undefined ? this.targetLabel(c.targetId) : '';
    return `${target} · ${c.header}${c.assay ? ` · ${c.assay.code} (${c.assay.readout})` : ''}`;
  }

  /** Per-assay values sit in a sub-group per assay, so a readout's potency and efficacy stay together. */
  private childrenOf(columns: SarColumn[], t: Table): (ColDef<SarRow> | ColGroupDef<SarRow>)[] {
    const out: (ColDef<SarRow> | ColGroupDef<SarRow>)[] = [];
    for (let i = 0; i < columns.length; ) {
      const assay = columns[i].assay;
      if (!assay) {
        out.push(this.columnOf(columns[i++], t));
        continue;
      }
      const members: SarColumn[] = [];
      while (i < columns.length && columns[i].assay?.id === assay.id) members.push(columns[i++]);
      out.push({
        groupId: `assay:${assay.id}`,
        headerName: `${assay.readout} · ${assay.code}`,
        headerTooltip: `Assay ${assay.code}, readout ${assay.readout}: potency and efficacy are kept per assay`,
        marryChildren: true,
        children: members.map((c) => this.columnOf(c, t)),
      });
    }
    return out;
  }

  private buildColumns(t: Table): (ColDef<SarRow> | ColGroupDef<SarRow>)[] {
    return t.columns.map((group) => {
      const children = this.childrenOf(group.children, t);
      const role = group.role === 'primary' ? 'primary target' : group.role === 'anti-target' ? 'anti-target' : null;
      const agonism = group.targetId !== undefined && t.targets.find((x) => x.id === group.targetId)?.agonismUnwanted;
      return {
        groupId: group.id,
        headerName: role ? `${group.header} · ${role}${agonism ? ', agonism unwanted' : ''}` : group.header,
        headerClass: group.role === 'primary' ? 'lg-head-primary' : group.role === 'anti-target' ? 'lg-head-anti' : undefined,
        headerTooltip: role ? `${group.header}: ${role} of ${t.project.name}` : undefined,
        marryChildren: true,
        children,
      } satisfies ColGroupDef<SarRow>;
    });
  }

  private columnOf(c: SarColumn, t: Table): ColDef<SarRow> {
    const base: ColDef<SarRow> = { colId: c.id, headerName: c.header, headerTooltip: c.unit ? `${c.header} (${c.unit})` : c.header, sortable: true, resizable: true };
    const num = (get: (r: SarRow) => number | null | undefined, decimals: number, width = 100): ColDef<SarRow> => ({
      ...base,
      width,
      filter: 'agNumberColumnFilter',
      type: 'numericColumn',
      valueGetter: (p) => (p.data ? get(p.data) ?? null : null),
      valueFormatter: (p: ValueFormatterParams<SarRow, number | null>) => (p.value === null || p.value === undefined ? '–' : p.value.toFixed(decimals)),
    });
    switch (c.id) {
      case 'structure':
        return { ...base, pinned: 'left', width: 148, sortable: false, filter: false, cellRenderer: StructureCell, suppressHeaderMenuButton: true };
      case 'registryNumber':
        return { ...base, pinned: 'left', width: 150, filter: 'agTextColumnFilter', valueGetter: (p) => p.data?.registryNumber, cellRenderer: CompoundCell };
      case 'series':
        return { ...base, pinned: 'left', width: 90, filter: 'agTextColumnFilter', valueGetter: (p) => p.data?.seriesCode, cellClass: 'lg-series-cell' };
      case 'mw':
        return num((r) => r.mw, 1);
      case 'clogp':
        return num((r) => r.clogp, 2);
      case 'tpsa':
        return num((r) => r.tpsa, 1);
      case 'heavyAtoms':
        return num((r) => r.heavyAtoms, 0, 110);
      case 'le':
      case 'lipe': {
        const key = c.id;
        return {
          ...num((r) => r[key]?.value, 2),
          valueFormatter: (p: ValueFormatterParams<SarRow, number | null>) => {
            const v = p.data?.[key];
            return v ? qualified(v.value, v.qualifier, 2) : '–';
          },
          headerTooltip: key === 'le' ? 'Ligand efficiency 1.37·pKi/HA, kcal/mol per heavy atom (Hopkins et al. 2004), at the primary target' : 'Lipophilic efficiency pKi − cLogP (Leeson & Springthorpe 2007), at the primary target',
        };
      }
      case 'score': {
        const w = t.project.ranking;
        const formula = `${w.potency} × primary pKi + ${w.margin} × worst margin + ${w.lipe} × LipE${w.requiredCalls.length ? `, only with ${w.requiredCalls.join(' or ')} at the primary target` : ''}`;
        return {
          ...num((r) => r.score, 2),
          headerTooltip: `The project's ranking score: ${formula} (set by a lead on the Selectivity page)`,
          tooltipValueGetter: (p) => (p.data ? (p.data.score === null ? `Not ranked: ${p.data.scoreNote}` : `${formula} = ${p.data.score.toFixed(2)}`) : null),
        };
      }
      case 'worstMargin':
        return {
          ...base,
          width: 150,
          filter: 'agNumberColumnFilter',
          valueGetter: (p) => p.data?.worstMargin?.value ?? null,
          cellRenderer: marginRenderer,
          cellClassRules: this.windowRules((r) => r.worstMargin?.window),
          headerTooltip: `Smallest margin of the primary target over any anti-target (Δ${t.selectivityBy}); window ${t.window} log units (${Math.round(10 ** t.window)}-fold)`,
        };
    }
    if (c.kind === 'rgroup') {
      const label = c.header;
      return {
        ...base,
        width: 170,
        filter: 'agTextColumnFilter',
        valueGetter: (p) => p.data?.rgroups?.[label] ?? (p.data?.rgroupProblem ? 'not on core' : null),
        cellRenderer: RGroupCell,
        cellRendererParams: { label },
        tooltipValueGetter: (p) => (p.data?.rgroupProblem ? `Not decomposed: ${p.data.rgroupProblem}` : null),
      };
    }
    if (c.kind === 'call' && c.targetId !== undefined) {
      const tid = c.targetId;
      return {
        ...base,
        width: 150,
        filter: 'agTextColumnFilter',
        valueGetter: (p) => p.data?.calls?.[tid]?.call ?? null,
        cellRenderer: callRenderer,
        cellRendererParams: { targetId: tid },
        headerTooltip: `Ligand type at ${this.targetLabel(tid)} from its approved results: a computed suggestion for a qualified pharmacologist to confirm (overrides marked)`,
      };
    }
    if (c.kind === 'margin' && c.targetId !== undefined) {
      const tid = c.targetId;
      return {
        ...base,
        width: 140,
        filter: 'agNumberColumnFilter',
        valueGetter: (p) => p.data?.margins[tid]?.value ?? null,
        cellRenderer: marginRenderer,
        cellRendererParams: { targetId: tid },
        cellClassRules: this.windowRules((r) => r.margins[tid]?.window),
        headerTooltip: `Δ${t.selectivityBy} of the primary target over ${this.targetLabel(tid)}, with the fold; marked when inside the ${Math.round(10 ** t.window)}-fold window`,
      };
    }
    if (c.kind === 'value' && c.targetId !== undefined && c.parameter) {
      const id = c.id;
      const key = c.parameter;
      const heading = this.headingOf(c);
      return {
        ...base,
        width: key === 'emax' ? 120 : 150,
        filter: 'agNumberColumnFilter',
        valueGetter: (p) => p.data?.cells[id]?.value ?? null,
        cellRenderer: valueRenderer,
        cellRendererParams: { column: id, parameter: key },
        cellStyle: (p: CellClassParams<SarRow>) => {
          const v = p.data?.cells[id]?.value;
          if (v === null || v === undefined) return null;
          return { ...scaleColours(scalePosition(key, v)), cursor: 'pointer' };
        },
        tooltipComponent: CellTooltip,
        tooltipValueGetter: (p) => (p.data?.cells[id] ? 'results' : null),
        tooltipComponentParams: { parameter: key, column: id, heading, includeSubmitted: t.includeSubmitted },
        headerTooltip: `${heading}${c.unit ? ` (${c.unit})` : ''}: mean ± SD (n) of ${t.includeSubmitted ? 'approved and submitted' : 'approved'} results, ${DECIMALS[key]} decimals${c.assay ? '' : '; pooled over the receptor\'s assays'}`,
      };
    }
    return base;
  }

  private windowRules(get: (r: SarRow) => string | undefined) {
    return {
      'lg-inside-window': (p: CellClassParams<SarRow>) => !!p.data && get(p.data) === 'inside',
      'lg-uncertain-window': (p: CellClassParams<SarRow>) => !!p.data && get(p.data) === 'uncertain',
    };
  }

  protected readonly windowWords = WINDOW_WORDS;
  protected readonly fold = (log: number) => Math.round(10 ** log).toLocaleString('en-GB');
}
