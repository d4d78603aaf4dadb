import { DecimalPipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, linkedSignal, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { RouterLink } from '@angular/router';
import { filter } from 'rxjs';
import { AuthStore } from '../../auth/auth-store';
import { saveFile } from '../../compounds/save-file';
import { apiErrorMessage } from '../../shared/api-error';
import { ConfirmDialog, type ConfirmData } from '../../shared/confirm-dialog';
import { idFromAddress, loadRecord } from '../../shared/record-load';
import { AssayApi, type Measurement, type Result, type RunFile } from '../assay-api';
import { describeNormalisation, KIND_LABELS, pointsOf } from '../assay-labels';
import { ResultCard, type ResultChange } from './result-card';
import { RunAnalysis } from './run-analysis';

const FILE_ROLES: Record<RunFile['role'], string> = { long: 'Raw data (long CSV)', matrix: 'Plate matrix', map: 'Plate map' };

@Component({
  selector: 'lg-run-detail',
  imports: [DecimalPipe, RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule, ResultCard, RunAnalysis],
  templateUrl: './run-detail.html',
  styleUrl: './run-detail.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RunDetail {
  private readonly api = inject(AssayApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly store = inject(AuthStore);

  /** Run id, from the address. */
  readonly id = input.required<string>();

  protected readonly page = loadRecord(this.id, (id) => this.fetch(idFromAddress(id)), { failure: 'The run could not be loaded.' });
  protected readonly run = this.page.value;
  /** Results and measurements change with refits and submissions; the rest of the run does not. */
  private readonly resultList = linkedSignal<Result[]>(() => this.run()?.results ?? []);
  private readonly measurementList = linkedSignal<Measurement[]>(() => this.run()?.measurements ?? []);
  protected readonly results = this.resultList.asReadonly();
  protected readonly canEnter = computed(() => {
    this.store.user();
    return this.store.can('enterResults');
  });
  protected readonly kindLabels = KIND_LABELS;
  protected readonly fileRoles = FILE_ROLES;
  protected readonly submittingAll = signal(false);
  /** Bumped after a refit, so that the Schild or modulation analysis is fetched again. */
  protected readonly analysisRevision = signal(0);
  protected readonly hasAnalysis = computed(() => {
    const kind = this.run()?.assay.kind;
    return kind === 'functional-antagonist' || kind === 'allosteric-modulation';
  });

  protected readonly normalisationText = computed(() => {
    const run = this.run();
    return run ? describeNormalisation(run.normalisation, run.assay) : '';
  });
  /** Points of each result, by result id. */
  protected readonly points = computed(() => {
    const all = this.measurementList();
    return new Map(this.results().map((r) => [r.id, pointsOf(r, all)]));
  });
  protected readonly drafts = computed(() => this.results().filter((r) => r.status === 'draft'));
  protected readonly counts = computed(() => {
    const c = { draft: 0, submitted: 0, approved: 0, rejected: 0 };
    for (const r of this.results()) c[r.status]++;
    return c;
  });

  private fetch(id: number | null) {
    return id === null ? null : this.api.run(id);
  }

  /** A card refitted or submitted its result: take the new result and the points' new state. */
  protected applyChange(change: ResultChange): void {
    const { result, exclude = [], include = [] } = change;
    this.resultList.update((list) => list.map((r) => (r.id === result.id ? result : r)));
    if (exclude.length || include.length) {
      const out = new Set(exclude);
      const back = new Set(include);
      this.measurementList.update((list) => list.map((m) => (out.has(m.id) ? { ...m, excluded: true } : back.has(m.id) ? { ...m, excluded: false } : m)));
    }
    if (change.refitted) this.analysisRevision.update((n) => n + 1);
    // Refitting the reference agonist changes α of the other drafts on the server.
    if (result.isReference && (exclude.length || include.length || change.refitted)) this.page.reload();
  }

  protected submitAll(): void {
    const run = this.run();
    const n = this.drafts().length;
    if (!run || !n) return;
    const data: ConfirmData = {
      title: `Submit ${n} draft${n === 1 ? '' : 's'} for review?`,
      message: `Every draft result of this run goes to the project leads for review, who get an e-mail. Submitted curves can no longer be refitted or changed here.`,
      confirm: `Submit ${n} draft${n === 1 ? '' : 's'}`,
    };
    this.dialog
      .open(ConfirmDialog, { data })
      .afterClosed()
      .pipe(filter(Boolean))
      .subscribe(() => {
        this.submittingAll.set(true);
        this.api.submitRun(run.id).subscribe({
          next: (ids) => {
            this.submittingAll.set(false);
            this.snackBar.open(`Submitted ${ids.length} result${ids.length === 1 ? '' : 's'} for review.`, 'OK', { duration: 5000 });
            this.page.reload();
          },
          error: (err: unknown) => {
            this.submittingAll.set(false);
            this.snackBar.open(apiErrorMessage(err, 'The drafts could not be submitted.'), 'OK', { duration: 8000 });
            this.page.reload();
          },
        });
      });
  }

  protected download(file: RunFile): void {
    const run = this.run();
    if (!run) return;
    this.api.runFile(run.id, file.id).subscribe({
      next: (blob) => saveFile(blob, file.fileName),
      error: (err: unknown) => this.snackBar.open(apiErrorMessage(err, 'The file could not be downloaded.'), 'OK', { duration: 6000 }),
    });
  }

  protected pointsFor(result: Result): Measurement[] {
    return this.points().get(result.id) ?? [];
  }
}
