import { ChangeDetectionStrategy, Component, computed, DestroyRef, inject, OnInit, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTabsModule } from '@angular/material/tabs';
import { ActivatedRoute, Router, RouterLink } from '@angular/router';
import { filter, forkJoin } from 'rxjs';
import { AuthStore } from '../../auth/auth-store';
import { apiErrorMessage } from '../../shared/api-error';
import { ConfirmDialog, type ConfirmData } from '../../shared/confirm-dialog';
import { AssayApi, type Assay, type AssaySummary, type Target } from '../assay-api';
import { KIND_SHORT, referenceRole } from '../assay-labels';
import { NewAssayDialog, type NewAssayData } from './new-assay-dialog';
import { NewTargetDialog } from './new-target-dialog';
import { ProjectPanels } from './project-panels';

interface TargetGroup {
  target: Target;
  assays: AssaySummary[];
}

@Component({
  selector: 'lg-assay-list',
  imports: [RouterLink, MatButtonModule, MatCheckboxModule, MatIconModule, MatProgressBarModule, MatTabsModule, ProjectPanels],
  templateUrl: './assay-list.html',
  styleUrl: './assay-list.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class AssayList implements OnInit {
  private readonly api = inject(AssayApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly router = inject(Router);
  private readonly route = inject(ActivatedRoute);
  private readonly destroyRef = inject(DestroyRef);
  private readonly store = inject(AuthStore);

  protected readonly kindLabels = KIND_SHORT;
  protected readonly referenceRole = referenceRole;
  protected readonly canEnter = computed(() => {
    this.store.user();
    return this.store.can('enterResults');
  });
  protected readonly canManageTargets = computed(() => {
    this.store.user();
    return this.store.can('manageTargets');
  });

  private readonly assayList = signal<AssaySummary[]>([]);
  private readonly targetList = signal<Target[]>([]);
  protected readonly assays = this.assayList.asReadonly();
  protected readonly targets = this.targetList.asReadonly();
  protected readonly loading = signal(true);
  protected readonly loadError = signal<string | null>(null);
  protected readonly tab = signal(0);
  /** Retired assays are hidden unless asked for (they keep their data; the assay page still opens). */
  protected readonly showRetired = signal(false);
  protected readonly retiredCount = computed(() => this.assays().filter((a) => a.retired).length);

  /** Assays grouped by receptor, receptors in name order (the API sorts assays that way). */
  protected readonly groups = computed<TargetGroup[]>(() => {
    const groups = new Map<number, TargetGroup>();
    for (const a of this.assays()) {
      if (a.retired && !this.showRetired()) continue;
      const group = groups.get(a.target.id) ?? { target: a.target, assays: [] };
      group.assays.push(a);
      groups.set(a.target.id, group);
    }
    return [...groups.values()];
  });
  protected readonly targetsWithoutAssays = computed(() => this.targets().filter((t) => !t.assayCount));

  ngOnInit(): void {
    this.tab.set(this.route.snapshot.queryParamMap.get('tab') === 'panel' ? 1 : 0);
    this.load();
  }

  protected load(): void {
    this.loading.set(true);
    this.loadError.set(null);
    forkJoin([this.api.assays(), this.api.targets()])
      .pipe(takeUntilDestroyed(this.destroyRef))
      .subscribe({
        next: ([assays, targets]) => {
          this.assayList.set(assays);
          this.targetList.set(targets);
          this.loading.set(false);
        },
        error: (err: unknown) => {
          this.loading.set(false);
          this.loadError.set(apiErrorMessage(err, 'The assays could not be loaded.'));
        },
      });
  }

  protected changeTab(index: number): void {
    this.tab.set(index);
    void this.router.navigate([], { relativeTo: this.route, queryParams: { tab: index === 1 ? 'panel' : null }, replaceUrl: true });
  }

  protected openNewAssay(target: Target | null = null): void {
    // A retired receptor takes no new assay (the server refuses one too).
    const data: NewAssayData = { targets: this.targets().filter((t) => !t.retired), targetId: target?.id ?? null };
    this.dialog
      .open(NewAssayDialog, { data, width: '680px', maxWidth: '95vw', autoFocus: 'first-tabbable' })
      .afterClosed()
      .pipe(filter((a): a is Assay => !!a))
      .subscribe((assay) => {
        this.snackBar.open(`Assay ${assay.code} is defined. Upload its first run here.`, 'OK', { duration: 6000 });
        void this.router.navigate(['/assays', assay.id]);
      });
  }

  /** Retire a receptor (after a confirmation) or restore it; audited on the server. */
  protected toggleTargetRetired(target: Target): void {
    const apply = (retired: boolean, done: string) =>
      this.api.setTargetRetired(target, retired).subscribe({
        next: (updated) => {
          this.targetList.update((list) => list.map((t) => (t.id === updated.id ? { ...updated, assayCount: t.assayCount } : t)));
          this.snackBar.open(done, 'OK', { duration: 6000 });
        },
        error: (err: unknown) => {
          this.snackBar.open(apiErrorMessage(err, 'The receptor could not be changed.'), 'OK', { duration: 8000 });
          this.load();
        },
      });
    if (target.retired) {
      apply(false, `${target.name} is restored: new assays can use it again.`);
      return;
    }
    const data: ConfirmData = {
      title: `Retire ${target.name} (${target.geneSymbol})?`,
      message: `Its ${target.assayCount === 1 ? 'assay' : `${target.assayCount ?? 0} assays`}, results and selectivity data stay, and pages keep showing them. New assays can no longer use it. You can restore it at any time.`,
      confirm: 'Retire',
    };
    this.dialog
      .open(ConfirmDialog, { data })
      .afterClosed()
      .pipe(filter(Boolean))
      .subscribe(() => apply(true, `${target.name} is retired.`));
  }

  protected openNewTarget(): void {
    this.dialog
      .open(NewTargetDialog, { width: '560px', maxWidth: '95vw', autoFocus: 'first-tabbable' })
      .afterClosed()
      .pipe(filter((t): t is Target => !!t))
      .subscribe((target) => {
        this.targetList.update((list) => [...list, { ...target, assayCount: 0 }].sort((a, b) => a.name.localeCompare(b.name)));
        this.snackBar.open(`${target.name} (${target.geneSymbol}) is in the receptor panel.`, 'OK', { duration: 5000 });
      });
  }
}
