import { DatePipe, DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTableModule } from '@angular/material/table';
import { Router, RouterLink } from '@angular/router';
import { filter } from 'rxjs';
import { AssayApi } from '../../assays/assay-api';
import { AuthStore } from '../../auth/auth-store';
import { MoleculeView } from '../../shared/molecule-view';
import { loadRecord } from '../../shared/record-load';
import { CompoundApi, type Batch, type BatchDraft, type HistoryEntry } from '../compound-api';
import { describeStereo } from '../stereo-status';
import { AddBatchDialog, type AddBatchData } from './add-batch-dialog';
import { CompoundCalls } from './compound-calls';
import { CompoundMechanism } from './compound-mechanism';
import { CompoundResults } from './compound-results';

/** One line of the history in words. */
function describeEvent(e: HistoryEntry): string {
  const d = (e.data ?? {}) as Record<string, unknown>;
  switch (e.action) {
    case 'compound.register':
      return `Registered ${d['registryNumber'] ?? ''} with batch ${d['batchNumber'] ?? ''}${d['salt'] ? ` (${d['salt']})` : ''}${d['source'] && d['source'] !== 'single' ? `, from ${d['source']}` : ''}`;
    case 'batch.create':
      return `Added batch ${d['batchNumber'] ?? ''}${d['salt'] ? ` (${d['salt']})` : ''}`;
    default:
      return e.action.replace(/[._]/g, ' ');
  }
}

@Component({
  selector: 'lg-compound-detail',
  imports: [DatePipe, DecimalPipe, RouterLink, MatButtonModule, MatIconModule, MatPaginatorModule, MatProgressBarModule, MatTableModule, MoleculeView, CompoundResults, CompoundCalls, CompoundMechanism],
  templateUrl: './compound-detail.html',
  styleUrl: './compound-detail.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundDetail {
  private readonly api = inject(CompoundApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly router = inject(Router);
  private readonly store = inject(AuthStore);
  private readonly assayApi = inject(AssayApi);

  /** Registry number or id, from the address. */
  readonly ref = input.required<string>();
  /** `?addBatch=1`: open the add-batch dialog once the compound is loaded. */
  readonly addBatch = input<string | undefined>();

  private readonly draft = ((this.router.currentNavigation()?.extras.state ?? history.state) as { batchDraft?: BatchDraft } | null)?.batchDraft ?? null;
  protected readonly page = loadRecord(this.ref, (ref) => this.api.get(ref), {
    failure: 'The compound could not be loaded.',
    loaded: () => this.showCompound(),
  });
  protected readonly compound = this.page.value;
  /** The compound's results with their assays, for the mechanism panels (evidence links, operational model, bias). */
  protected readonly mechanismResults = rxResource({
    params: () => this.compound()?.registryNumber,
    stream: ({ params }) => this.assayApi.compoundResults(params),
  });
  protected readonly resultItems = computed(() => this.mechanismResults.value()?.items ?? []);
  protected readonly canRegister = computed(() => {
    this.store.user();
    return this.store.can('register');
  });
  protected readonly stereoText = computed(() => {
    const c = this.compound();
    return c ? describeStereo(c.stereoStatus, c.stereoCentres) : '';
  });
  protected readonly history = computed(() =>
    [...(this.compound()?.history ?? [])].sort((a, b) => b.at.localeCompare(a.at)).map((e) => ({ ...e, text: describeEvent(e) })),
  );

  protected readonly batchColumns = ['batchNumber', 'saltLabel', 'batchFormula', 'formulaWeight', 'purity', 'amountMg', 'source', 'notebookRef', 'createdAt'];
  protected readonly batchPageIndex = signal(0);
  protected readonly batchPageSize = signal(10);
  protected readonly batchPage = computed(() => {
    const start = this.batchPageIndex() * this.batchPageSize();
    return (this.compound()?.batches ?? []).slice(start, start + this.batchPageSize());
  });

  /** A compound from a new address: its first page of batches, and the add-batch dialog if asked for. */
  private showCompound(): void {
    this.batchPageIndex.set(0);
    if (this.addBatch() && this.canRegister()) this.openAddBatch(this.draft);
  }

  protected changeBatchPage(event: PageEvent): void {
    this.batchPageIndex.set(event.pageIndex);
    this.batchPageSize.set(event.pageSize);
  }

  protected openAddBatch(draft: BatchDraft | null = null): void {
    const c = this.compound();
    if (!c) return;
    if (this.addBatch()) void this.router.navigate([], { queryParams: { addBatch: null }, queryParamsHandling: 'merge', replaceUrl: true });
    const data: AddBatchData = { compound: { id: c.id, registryNumber: c.registryNumber, smiles: c.smiles }, draft };
    this.dialog
      .open(AddBatchDialog, { data, width: '620px', maxWidth: '95vw', autoFocus: 'first-tabbable' })
      .afterClosed()
      .pipe(filter((b): b is Batch => !!b))
      .subscribe((batch) => {
        this.snackBar.open(`Added batch ${batch.batchNumber} (${batch.saltLabel})`, 'OK', { duration: 6000 });
        this.page.reload();
      });
  }
}
