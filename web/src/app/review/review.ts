import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, DestroyRef, inject, OnInit, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatPaginatorModule, type PageEvent } from '@angular/material/paginator';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatSelectModule } from '@angular/material/select';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { filter, switchMap } from 'rxjs';
import { apiErrorMessage } from '../shared/api-error';
import { AssayApi, type AssaySummary, type ReviewItem } from '../assays/assay-api';
import { KIND_SHORT, responseAxisLabel } from '../assays/assay-labels';
import { CurveChart } from '../assays/curve-chart';
import { ResultValues } from '../assays/result-values';
import { DecisionDialog, type DecisionData } from './decision-dialog';

/** Submitted results waiting for a project lead: approve or reject, one at a time. */
@Component({
  selector: 'lg-review',
  imports: [DatePipe, RouterLink, MatButtonModule, MatIconModule, MatPaginatorModule, MatProgressBarModule, MatSelectModule, CurveChart, ResultValues],
  templateUrl: './review.html',
  styleUrl: './review.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Review implements OnInit {
  private readonly api = inject(AssayApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly destroyRef = inject(DestroyRef);
  private readonly router = inject(Router);
  private readonly route = inject(ActivatedRoute);

  private readonly itemList = signal<ReviewItem[]>([]);
  protected readonly items = this.itemList.asReadonly();
  protected readonly total = signal(0);
  protected readonly caution = signal('');
  protected readonly pageIndex = signal(0);
  protected readonly pageSize = signal(10);
  protected readonly loading = signal(true);
  protected readonly loadError = signal<string | null>(null);
  protected readonly deciding = signal<number | null>(null);
  protected readonly kindLabels = KIND_SHORT;
  /** Only this assay's results (kept in the address as ?assay=ID), or every assay. */
  protected readonly assayFilter = signal<number | null>(null);
  protected readonly assayOptions = signal<AssaySummary[]>([]);
  protected readonly yLabel = responseAxisLabel;

  ngOnInit(): void {
    const assay = Number(this.route.snapshot.queryParamMap.get('assay'));
    this.assayFilter.set(Number.isInteger(assay) && assay > 0 ? assay : null);
    this.api.assays().pipe(takeUntilDestroyed(this.destroyRef)).subscribe({ next: (list) => this.assayOptions.set(list), error: () => this.assayOptions.set([]) });
    this.load();
  }

  protected filterByAssay(assayId: number | null): void {
    this.assayFilter.set(assayId);
    this.pageIndex.set(0);
    void this.router.navigate([], { queryParams: { assay: assayId }, replaceUrl: true });
    this.load();
  }

  protected load(): void {
    this.loading.set(true);
    this.loadError.set(null);
    this.api
      .reviewQueue(this.pageSize(), this.pageIndex() * this.pageSize(), this.assayFilter())
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: (page) => {
          this.loading.set(false);
          this.itemList.set(page.items);
          this.total.set(page.total);
          this.caution.set(page.caution);
          if (!page.items.length && page.total > 0 && this.pageIndex() > 0) {
            this.pageIndex.set(Math.max(0, Math.ceil(page.total / this.pageSize()) - 1));
            this.load();
          }
        },
        error: (err: unknown) => {
          this.loading.set(false);
          this.loadError.set(apiErrorMessage(err, 'The review queue could not be loaded.'));
        },
      });
  }

  protected changePage(event: PageEvent): void {
    this.pageIndex.set(event.pageIndex);
    this.pageSize.set(event.pageSize);
    this.load();
  }

  protected decide(item: ReviewItem, decision: DecisionData['decision']): void {
    const subject = `${item.batch.batchNumber} in ${item.assay.code}`;
    this.dialog
      .open(DecisionDialog, { data: { decision, subject } satisfies DecisionData, autoFocus: 'first-tabbable' })
      .afterClosed()
      .pipe(
        filter((answer): answer is { comment: string } => !!answer),
        switchMap(({ comment }) => {
          this.deciding.set(item.id);
          return decision === 'approve' ? this.api.approve(item.id, comment, item.version) : this.api.reject(item.id, comment, item.version);
        }),
      )
      .subscribe({
        next: () => {
          this.deciding.set(null);
          this.itemList.update((list) => list.filter((i) => i.id !== item.id));
          this.total.update((n) => Math.max(0, n - 1));
          this.snackBar.open(`${decision === 'approve' ? 'Approved' : 'Rejected'} ${subject}. The submitter gets an e-mail.`, 'OK', { duration: 5000 });
          if (!this.items().length && this.total() > 0) this.load();
        },
        error: (err: unknown) => {
          this.deciding.set(null);
          this.snackBar.open(apiErrorMessage(err, 'The decision could not be saved.'), 'OK', { duration: 8000 });
          this.load();
        },
      });
  }
}
