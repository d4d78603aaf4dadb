import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, linkedSignal, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { RouterLink } from '@angular/router';
import { filter } from 'rxjs';
import type { Result } from '../../assays/assay-api';
import { MechanismApi, type LigandCall } from '../../assays/mechanism-api';
import { AuthStore } from '../../auth/auth-store';
import { apiErrorMessage } from '../../shared/api-error';
import { ConfirmDialog, type ConfirmData } from '../../shared/confirm-dialog';
import { OverrideCallDialog, type OverrideCallData } from './override-call-dialog';

/**
 * "Ligand type by receptor": each call with its rule, evidence, conflicts and source (computed by
 * the rule, or a pharmacologist's override with reason), the contradiction flag and the caution.
 */
@Component({
  selector: 'lg-compound-calls',
  imports: [DatePipe, RouterLink, MatButtonModule, MatIconModule, MatProgressBarModule],
  template: `
    @if (answer.isLoading() && !calls().length) {
      <mat-progress-bar mode="indeterminate" aria-label="Loading the ligand-type calls" />
    } @else if (answer.error()) {
      <p class="lg-error-text" role="alert">{{ errorText() }} <button mat-button type="button" (click)="answer.reload()">Try again</button></p>
    } @else if (!calls().length) {
      <p class="empty" data-testid="no-calls">No call yet. A call per receptor is computed once results of this compound are approved.</p>
    } @else {
      <p class="lg-caution" role="note" data-testid="call-caution"><mat-icon inline>info</mat-icon> {{ caution() }}</p>
      <ul class="calls" aria-label="Ligand-type calls">
        @for (c of calls(); track c.id) {
          <li class="call" [class.manual]="c.source === 'manual'" [attr.aria-labelledby]="'call-' + c.id" data-testid="call">
            <div class="call-head">
              <h3 class="receptor" [id]="'call-' + c.id">{{ c.target.name }} <span class="gene">{{ c.target.geneSymbol }}</span></h3>
              <span class="verdict">{{ c.call }}</span>
              @if (c.source === 'manual') {
                <span class="lg-pill source override" data-testid="call-source">Pharmacologist’s override</span>
              } @else {
                <span class="lg-pill source rule" data-testid="call-source">Computed suggestion</span>
              }
              @if (c.contradicted) {
                <span class="lg-pill contradicted" role="status" data-testid="call-contradicted"><mat-icon inline>report</mat-icon> Contradicted by a later result: review the override</span>
              }
              @if (canEdit()) {
                <span class="actions">
                  <button mat-stroked-button type="button" (click)="openOverride(c)" [disabled]="busy() === c.id" [attr.aria-label]="'Override the call at ' + c.target.name">Override…</button>
                  @if (c.source === 'manual') {
                    <button mat-button type="button" (click)="backToRule(c)" [disabled]="busy() === c.id" [attr.aria-label]="'Back to the rule at ' + c.target.name">Back to the rule</button>
                  }
                </span>
              }
            </div>
            @if (c.override; as o) {
              <p class="override-note">
                Set by {{ o.by?.name ?? 'someone' }} on {{ o.at | date: 'yyyy-MM-dd HH:mm' }}: “{{ o.reason }}”.
                The rule computes <strong>{{ c.computedCall }}</strong>.
              </p>
            }
            <p class="rule"><span class="label">Rule</span> {{ c.rule }}</p>
            @if (c.evidence.length) {
              <div class="evidence">
                <span class="label">Evidence</span>
                <ul [attr.aria-label]="'Evidence for the call at ' + c.target.name">
                  @for (e of c.evidence; track e.resultId) {
                    <li>
                      <a [routerLink]="['/assays', e.assayId]">{{ e.assayCode }}</a>
                      @if (runOf().get(e.resultId); as run) {
                        · <a [routerLink]="['/assays/runs', run.id]" [attr.aria-label]="'Run of ' + run.date + ' in ' + e.assayCode">run of {{ run.date }}</a>
                      } @else {
                        · entered by hand
                      }
                      — {{ e.note }}
                    </li>
                  }
                </ul>
              </div>
            } @else {
              <p class="rule"><span class="label">Evidence</span> no approved result at this receptor</p>
            }
            @if (c.conflicts.length) {
              <div class="conflicts">
                <span class="label"><mat-icon inline>warning</mat-icon> Conflicts</span>
                <ul>
                  @for (k of c.conflicts; track $index) { <li>{{ k.note }} (results {{ k.resultIds.join(', ') }})</li> }
                </ul>
              </div>
            }
            <p class="when">Computed {{ c.computedAt | date: 'yyyy-MM-dd HH:mm' }}</p>
          </li>
        }
      </ul>
      <p class="note">{{ thresholdsNote() }} Each assay’s thresholds are on its page.</p>
    }
  `,
  styles: `
    :host { display: block; }
    .calls { list-style: none; margin: 0; padding: 0; display: flex; flex-direction: column; gap: 12px; }
    .call { padding: 12px 14px; border: 1px solid var(--mat-sys-outline-variant); border-radius: 10px; display: flex; flex-direction: column; gap: 6px; }
    .call.manual { border-color: var(--mat-sys-secondary); }
    .call-head { display: flex; flex-wrap: wrap; align-items: center; gap: 6px 12px; }
    .receptor { margin: 0; font: var(--mat-sys-title-small); }
    .gene { font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); margin-left: 4px; }
    .verdict { font: var(--mat-sys-title-medium); color: var(--mat-sys-primary); }
    .source.rule { background: var(--mat-sys-surface-container-highest); color: var(--mat-sys-on-surface); }
    .source.override { background: var(--mat-sys-secondary-container); color: var(--mat-sys-on-secondary-container); }
    .contradicted { background: var(--mat-sys-error-container); color: var(--mat-sys-on-error-container); }
    .actions { margin-left: auto; display: flex; gap: 4px; }
    .label { font: var(--mat-sys-label-medium); color: var(--mat-sys-on-surface-variant); margin-right: 6px; }
    p { margin: 0; }
    .rule, .evidence, .conflicts, .override-note { font: var(--mat-sys-body-medium); }
    .evidence ul, .conflicts ul { margin: 2px 0 0; padding-left: 20px; }
    .evidence a { color: var(--mat-sys-primary); font-weight: 500; }
    .conflicts { color: var(--mat-sys-on-tertiary-container); background: var(--mat-sys-tertiary-container); border-radius: 8px; padding: 6px 10px; }
    .override-note { padding: 6px 10px; border-radius: 8px; background: var(--mat-sys-surface-container); }
    .when, .note, .empty { font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
    .note { margin-top: 8px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundCalls {
  private readonly api = inject(MechanismApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly store = inject(AuthStore);

  readonly registryNumber = input.required<string>();
  /** The compound's results, to link each piece of evidence to its run. */
  readonly results = input<readonly Result[]>([]);

  protected readonly answer = rxResource({ params: () => this.registryNumber(), stream: ({ params }) => this.api.calls(params) });
  /** The calls as shown: the server's, with overrides applied in place. */
  protected readonly calls = linkedSignal<LigandCall[]>(() => this.answer.value()?.items ?? []);
  protected readonly caution = computed(() => this.answer.value()?.caution ?? '');
  protected readonly thresholdsNote = computed(() => this.answer.value()?.thresholdsNote ?? '');
  protected readonly errorText = computed(() => apiErrorMessage(this.answer.error(), 'The ligand-type calls could not be loaded.'));
  /** Result id → its run (id and date), for the evidence links. */
  protected readonly runOf = computed(() => new Map(this.results().filter((r) => r.runId !== null).map((r) => [r.id, { id: r.runId!, date: r.runDate ?? '' }])));
  protected readonly canEdit = computed(() => {
    this.store.user();
    return this.store.can('enterResults');
  });
  protected readonly busy = signal<number | null>(null);

  protected openOverride(call: LigandCall): void {
    const data: OverrideCallData = { call };
    this.dialog
      .open(OverrideCallDialog, { data, width: '560px', maxWidth: '95vw', autoFocus: 'first-tabbable' })
      .afterClosed()
      .pipe(filter((c): c is LigandCall => !!c))
      .subscribe((updated) => {
        this.replace(updated);
        this.snackBar.open(`The call at ${updated.target.name} is now your override: ${updated.call}.`, 'OK', { duration: 6000 });
      });
  }

  protected backToRule(call: LigandCall): void {
    const data: ConfirmData = {
      title: 'Go back to the computed call?',
      message: `The call at ${call.target.name} returns to what the rule computes from the approved results: ${call.computedCall}. Your override and its reason stay in the audit trail.`,
      confirm: 'Back to the rule',
    };
    this.dialog
      .open(ConfirmDialog, { data })
      .afterClosed()
      .pipe(filter(Boolean))
      .subscribe(() => {
        this.busy.set(call.id);
        this.api.clearOverride(call.id).subscribe({
          next: (updated) => {
            this.busy.set(null);
            this.replace(updated);
            this.snackBar.open(`The call at ${updated.target.name} follows the rule again: ${updated.call}.`, 'OK', { duration: 6000 });
          },
          error: (err: unknown) => {
            this.busy.set(null);
            this.snackBar.open(apiErrorMessage(err, 'The override could not be cleared.'), 'OK', { duration: 8000 });
          },
        });
      });
  }

  private replace(updated: LigandCall): void {
    this.calls.update((list) => list.map((c) => (c.id === updated.id ? updated : c)));
  }
}
