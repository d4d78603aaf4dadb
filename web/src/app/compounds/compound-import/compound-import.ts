import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, OnInit, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { FormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatButtonToggleModule } from '@angular/material/button-toggle';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTableModule } from '@angular/material/table';
import { RouterLink } from '@angular/router';
import { Subscription, switchMap, takeWhile, timer } from 'rxjs';
import { apiErrorMessage } from '../../shared/api-error';
import { CompoundApi, type ImportInspection, type ImportJob, type ImportMapping, type ImportOutcome, type Series } from '../compound-api';
import { saveFile } from '../save-file';

type MappingKey = keyof ImportMapping;
type ReportFilter = 'all' | ImportOutcome['status'];

/** The mapping form's fields, in the order shown. */
const MAPPING_FIELDS: readonly { key: MappingKey; label: string }[] = [
  { key: 'structureColumn', label: 'Structure (SMILES or molfile)' },
  { key: 'nameColumn', label: 'Name' },
  { key: 'aliasColumn', label: 'Aliases' },
  { key: 'seriesColumn', label: 'Series code' },
  { key: 'purityColumn', label: 'Purity (%)' },
  { key: 'amountColumn', label: 'Amount (mg)' },
  { key: 'sourceColumn', label: 'Source' },
  { key: 'notebookColumn', label: 'Notebook reference' },
];

const STATUS_LABELS: Record<ImportOutcome['status'], string> = {
  created: 'Registered',
  duplicate: 'Already registered',
  'batch-added': 'Batch added',
  error: 'Error',
};

@Component({
  selector: 'lg-compound-import',
  imports: [
    ReactiveFormsModule, RouterLink, MatButtonModule, MatButtonToggleModule, MatFormFieldModule, MatIconModule, MatPaginatorModule,
    MatProgressBarModule, MatSelectModule, MatTableModule,
  ],
  templateUrl: './compound-import.html',
  styleUrl: './compound-import.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundImport implements OnInit {
  private readonly api = inject(CompoundApi);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);

  protected readonly statusLabels: Record<string, string> = STATUS_LABELS;
  protected readonly reportColumns = ['index', 'status', 'registryNumber', 'batchNumber', 'name', 'message'];
  protected readonly form = inject(FormBuilder).group({
    structureColumn: [null as string | null],
    nameColumn: [null as string | null],
    aliasColumn: [null as string | null],
    seriesColumn: [null as string | null],
    purityColumn: [null as string | null],
    amountColumn: [null as string | null],
    sourceColumn: [null as string | null],
    notebookColumn: [null as string | null],
    seriesId: [null as number | null],
  });

  private readonly fileSignal = signal<File | null>(null);
  private readonly inspectionSignal = signal<ImportInspection | null>(null);
  private readonly jobSignal = signal<ImportJob | null>(null);
  private readonly seriesList = signal<Series[]>([]);
  private polling: Subscription | null = null;

  protected readonly file = this.fileSignal.asReadonly();
  protected readonly inspection = this.inspectionSignal.asReadonly();
  protected readonly job = this.jobSignal.asReadonly();
  protected readonly series = this.seriesList.asReadonly();
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);
  protected readonly reportFilter = signal<ReportFilter>('all');
  protected readonly pageIndex = signal(0);
  protected readonly pageSize = signal(25);

  protected readonly mappingFields = computed(() => {
    const i = this.inspection();
    return MAPPING_FIELDS.filter((f) => f.key !== 'structureColumn' || i?.format === 'csv');
  });
  protected readonly finished = computed(() => {
    const status = this.job()?.status;
    return status === 'done' || status === 'failed';
  });
  protected readonly progress = computed(() => {
    const j = this.job();
    return j && j.total > 0 ? Math.round((100 * j.processed) / j.total) : 0;
  });
  protected readonly report = computed(() => {
    const all = this.job()?.report ?? [];
    const f = this.reportFilter();
    return f === 'all' ? all : all.filter((o) => o.status === f);
  });
  protected readonly reportPage = computed(() => {
    const start = this.pageIndex() * this.pageSize();
    return this.report().slice(start, start + this.pageSize());
  });

  ngOnInit(): void {
    this.api
      .series()
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({ next: (list) => this.seriesList.set(list), error: () => this.seriesList.set([]) });
  }

  protected chooseFile(input: HTMLInputElement): void {
    const file = input.files?.[0] ?? null;
    input.value = '';
    if (!file) return;
    this.startOver();
    this.fileSignal.set(file);
    this.busy.set(true);
    this.api
      .inspectImport(file)
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (inspection) => {
          this.busy.set(false);
          this.inspectionSignal.set(inspection);
          this.fillMapping(inspection);
        },
        error: (err: unknown) => {
          this.busy.set(false);
          this.error.set(apiErrorMessage(err, 'The file could not be read.'));
        },
      });
  }

  protected startImport(): void {
    const file = this.file();
    if (!file || this.busy()) return;
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.busy.set(true);
    this.error.set(null);
    this.api
      .startImport(file, this.options())
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (job) => {
          this.busy.set(false);
          this.form.disable();
          this.jobSignal.set(job);
          this.pollJob(job.id);
        },
        error: (err: unknown) => {
          this.busy.set(false);
          this.error.set(apiErrorMessage(err, 'The import could not be started.'));
        },
      });
  }

  protected startOver(): void {
    this.polling?.unsubscribe();
    this.polling = null;
    this.fileSignal.set(null);
    this.inspectionSignal.set(null);
    this.jobSignal.set(null);
    this.error.set(null);
    this.reportFilter.set('all');
    this.pageIndex.set(0);
    this.form.enable();
    this.form.reset();
  }

  protected filterReport(filter: ReportFilter): void {
    this.reportFilter.set(filter);
    this.pageIndex.set(0);
  }

  protected changePage(event: PageEvent): void {
    this.pageIndex.set(event.pageIndex);
    this.pageSize.set(event.pageSize);
  }

  protected downloadTemplate(): void {
    this.api.importTemplate().subscribe({
      next: (blob) => saveFile(blob, 'ligandry-compound-import-template.csv'),
      error: (err: unknown) => this.snackBar.open(apiErrorMessage(err, 'The template could not be downloaded.'), 'OK', { duration: 6000 }),
    });
  }

  protected downloadReport(): void {
    const job = this.job();
    if (!job) return;
    this.api.importReport(job.id).subscribe({
      next: (blob) => saveFile(blob, `import-${job.id}-report.csv`),
      error: (err: unknown) => this.snackBar.open(apiErrorMessage(err, 'The report could not be downloaded.'), 'OK', { duration: 6000 }),
    });
  }

  private fillMapping(inspection: ImportInspection): void {
    const m = inspection.mapping;
    this.form.reset({
      structureColumn: m.structureColumn ?? null,
      nameColumn: m.nameColumn ?? null,
      aliasColumn: m.aliasColumn ?? null,
      seriesColumn: m.seriesColumn ?? null,
      purityColumn: m.purityColumn ?? null,
      amountColumn: m.amountColumn ?? null,
      sourceColumn: m.sourceColumn ?? null,
      notebookColumn: m.notebookColumn ?? null,
      seriesId: null,
    });
    const structure = this.form.controls.structureColumn;
    structure.setValidators(inspection.format === 'csv' ? Validators.required : null);
    structure.updateValueAndValidity();
  }

  private options(): ImportMapping & { seriesId?: number } {
    const v = this.form.getRawValue();
    const options: ImportMapping & { seriesId?: number } = {};
    for (const f of this.mappingFields()) {
      const column = v[f.key];
      if (column) options[f.key] = column;
    }
    if (v.seriesId) options.seriesId = v.seriesId;
    return options;
  }

  private pollJob(id: number): void {
    this.polling?.unsubscribe();
    this.polling = timer(1000, 1000)
      .pipe(
        switchMap(() => this.api.importJob(id)),
        takeWhile((job) => job.status !== 'done' && job.status !== 'failed', true),
        takeUntilDestroyed(this.destroyRef),
      )
      .subscribe({
        next: (job) => this.jobSignal.set(job),
        error: (err: unknown) => this.error.set(apiErrorMessage(err, 'The progress of the import could not be read; reload the page to see it.')),
      });
  }
}
