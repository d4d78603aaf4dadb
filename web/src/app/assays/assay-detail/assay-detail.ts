import { HttpErrorResponse } from '@angular/common/http';
import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, input, signal } from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { RouterLink } from '@angular/router';
import { catchError, filter, forkJoin, map, of, switchMap, tap } from 'rxjs';
import { AuthStore } from '../../auth/auth-store';
import { apiErrorMessage } from '../../shared/api-error';
import { AssayApi, type AssayDetail as Assay, type Result, type ResultStatus } from '../assay-api';
import { KIND_LABELS, referenceRole, summariseValues, toNanomolar } from '../assay-labels';
import { StatusChip } from '../status-chip';
import { ManualEntryDialog } from './manual-entry-dialog';
import { RunUpload } from './run-upload';

type LoadState = { kind: 'loading' } | { kind: 'ready'; assay: Assay; manual: Result[] } | { kind: 'missing'; message: string } | { kind: 'error'; message: string };

const STATUS_ORDER: readonly ResultStatus[] = ['draft', 'submitted', 'approved', 'rejected'];

@Component({
  selector: 'lg-assay-detail',
  imports: [RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule, StatusChip, RunUpload],
  templateUrl: './assay-detail.html',
  styleUrl: './assay-detail.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AssayDetail {
  private readonly api = inject(AssayApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  private readonly store = inject(AuthStore);

  /** Assay id, from the address. */
  readonly id = input.required<string>();

  private readonly loadState = signal<LoadState>({ kind: 'loading' });
  protected readonly state = this.loadState.asReadonly();
  protected readonly assay = computed(() => {
    const s = this.state();
    return s.kind === 'ready' ? s.assay : null;
  });
  protected readonly manual = computed(() => {
    const s = this.state();
    return s.kind === 'ready' ? s.manual : [];
  });
  protected readonly loadError = computed(() => {
    const s = this.state();
    return s.kind === 'error' ? s.message : null;
  });
  protected readonly canEnter = computed(() => {
    this.store.user();
    return this.store.can('enterResults');
  });
  protected readonly kindLabels = KIND_LABELS;
  protected readonly referenceRole = referenceRole;
  protected readonly nM = toNanomolar;
  protected readonly summarise = summariseValues;
  protected readonly statusOrder = STATUS_ORDER;
  protected readonly submitting = signal<number | null>(null);

  /** The correction that turns pIC50 into pKi or pKB for this protocol, in words. */
  protected readonly correction = computed(() => {
    const a = this.assay();
    if (!a) return null;
    if (a.kind === 'binding' && a.radioligandConcM && a.radioligandKdM) {
      const shift = Math.log10(1 + a.radioligandConcM / a.radioligandKdM);
      return `pKi = pIC50 + log10(1 + [L]/Kd) = pIC50 + ${shift.toFixed(2)} (Cheng–Prusoff)`;
    }
    if (a.kind === 'functional-antagonist' && a.agonistConcM && a.agonistEc50M) {
      const n = a.agonistHill ?? 1;
      const shift = Math.log10(Math.pow(2 + Math.pow(a.agonistConcM / a.agonistEc50M, n), 1 / n) - 1);
      return `pKB = pIC50 + log10((2 + ([A]/EC50)^n)^(1/n) − 1) = pIC50 + ${shift.toFixed(2)} (generalised Cheng–Prusoff, n = ${n})`;
    }
    return null;
  });

  constructor() {
    toObservable(this.id)
      .pipe(
        tap(() => this.loadState.set({ kind: 'loading' })),
        switchMap((id) => this.fetch(Number(id))),
        takeUntilDestroyed(),
      )
      .subscribe((state) => this.loadState.set(state));
  }

  private fetch(id: number) {
    if (!Number.isInteger(id) || id <= 0) return of<LoadState>({ kind: 'missing', message: 'not an assay id' });
    return forkJoin([this.api.assay(id), this.api.assayResults(id)]).pipe(
      map(([assay, results]): LoadState => ({ kind: 'ready', assay, manual: results.items.filter((r) => r.source === 'manual') })),
      catchError((err: unknown) =>
        of<LoadState>(
          err instanceof HttpErrorResponse && (err.status === 404 || err.status === 400)
            ? { kind: 'missing', message: apiErrorMessage(err) }
            : { kind: 'error', message: apiErrorMessage(err, 'The assay could not be loaded.') },
        ),
      ),
    );
  }

  protected reload(): void {
    this.fetch(Number(this.id()))
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe((state) => this.loadState.set(state));
  }

  protected countOf(results: Partial<Record<ResultStatus, number>>, status: ResultStatus): number {
    return results[status] ?? 0;
  }

  protected openManualEntry(): void {
    const assay = this.assay();
    if (!assay) return;
    this.dialog
      .open(ManualEntryDialog, { data: { assay }, width: '720px', maxWidth: '95vw', autoFocus: 'first-tabbable' })
      .afterClosed()
      .pipe(filter((r): r is Result => !!r))
      .subscribe((result) => {
        this.snackBar.open(`Saved a draft result for ${result.batch.batchNumber}. Submit it for review from the list of values entered by hand.`, 'OK', { duration: 7000 });
        this.reload();
      });
  }

  protected submitManual(result: Result): void {
    this.submitting.set(result.id);
    this.api.submitResult(result.id).subscribe({
      next: () => {
        this.submitting.set(null);
        this.snackBar.open(`Submitted ${result.batch.batchNumber} for review.`, 'OK', { duration: 5000 });
        this.reload();
      },
      error: (err: unknown) => {
        this.submitting.set(null);
        this.snackBar.open(apiErrorMessage(err, 'The result could not be submitted.'), 'OK', { duration: 8000 });
      },
    });
  }
}
