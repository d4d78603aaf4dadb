import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { RouterLink } from '@angular/router';
import { filter, forkJoin, map } from 'rxjs';
import { AuthStore } from '../../auth/auth-store';
import { apiErrorMessage } from '../../shared/api-error';
import { idFromAddress, loadRecord } from '../../shared/record-load';
import { ConfirmDialog, type ConfirmData } from '../../shared/confirm-dialog';
import { AssayApi, type AssayDetail as AssayRecord, type Result, type ResultStatus } from '../assay-api';
import { KIND_LABELS, referenceRole, summariseValues, toNanomolar } from '../assay-labels';
import { StatusChip } from '../status-chip';
import { CallThresholdsPanel } from './call-thresholds';
import { ManualEntryDialog } from './manual-entry-dialog';
import { RunUpload } from './run-upload';

const STATUS_ORDER: readonly ResultStatus[] = ['draft', 'submitted', 'approved', 'rejected'];

@Component({
  selector: 'lg-assay-detail',
  imports: [RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule, StatusChip, RunUpload, CallThresholdsPanel],
  templateUrl: './assay-detail.html',
  styleUrl: './assay-detail.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AssayDetail {
  private readonly api = inject(AssayApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly store = inject(AuthStore);

  /** Assay id, from the address. */
  readonly id = input.required<string>();

  /** The assay with the values entered by hand for it. */
  protected readonly page = loadRecord(this.id, (id) => this.fetch(idFromAddress(id)), { failure: 'The assay could not be loaded.' });
  protected readonly assay = computed(() => this.page.value()?.assay ?? null);
  protected readonly manual = computed(() => this.page.value()?.manual ?? []);
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
  protected readonly changingRetired = signal(false);

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

  private fetch(id: number | null) {
    if (id === null) return null;
    return forkJoin([this.api.assay(id), this.api.assayResults(id)]).pipe(
      map(([assay, results]) => ({ assay, manual: results.items.filter((r) => r.source === 'manual') })),
    );
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
        this.page.reload();
      });
  }

  /** Retire (after a confirmation) or restore; the server audits both and refuses a stale version (409). */
  protected toggleRetired(assay: AssayRecord): void {
    if (assay.retired) {
      this.applyRetired(assay, false, `${assay.code} is restored: it takes new runs and values again.`);
      return;
    }
    const data: ConfirmData = {
      title: `Retire ${assay.code}?`,
      message: `Its ${assay.runs.length === 1 ? 'run' : `${assay.runs.length} runs`}, results and ligand-type calls stay, and pages keep showing them. While it is retired it takes no new runs or values. You can restore it at any time.`,
      confirm: 'Retire',
    };
    this.dialog
      .open(ConfirmDialog, { data })
      .afterClosed()
      .pipe(filter(Boolean))
      .subscribe(() => this.applyRetired(assay, true, `${assay.code} is retired.`));
  }

  private applyRetired(assay: AssayRecord, retired: boolean, done: string): void {
    this.changingRetired.set(true);
    this.api.setAssayRetired(assay, retired).subscribe({
      next: () => {
        this.changingRetired.set(false);
        this.snackBar.open(done, 'OK', { duration: 6000 });
        this.page.reload();
      },
      error: (err: unknown) => {
        this.changingRetired.set(false);
        this.snackBar.open(apiErrorMessage(err, 'The assay could not be changed.'), 'OK', { duration: 8000 });
        this.page.reload();
      },
    });
  }

  protected submitManual(result: Result): void {
    this.submitting.set(result.id);
    this.api.submitResult(result.id).subscribe({
      next: () => {
        this.submitting.set(null);
        this.snackBar.open(`Submitted ${result.batch.batchNumber} for review.`, 'OK', { duration: 5000 });
        this.page.reload();
      },
      error: (err: unknown) => {
        this.submitting.set(null);
        this.snackBar.open(apiErrorMessage(err, 'The result could not be submitted.'), 'OK', { duration: 8000 });
      },
    });
  }
}
