import { ChangeDetectionStrategy, Component, computed, inject, input, linkedSignal, output, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { filter } from 'rxjs';
import { apiErrorCode, apiErrorMessage, apiFieldProblems } from '../../shared/api-error';
import { ConfirmDialog, type ConfirmData } from '../../shared/confirm-dialog';
import type { Assay, AssayKind } from '../assay-api';
import { MechanismApi, type CallThresholds, type ThresholdKey } from '../mechanism-api';

interface ThresholdSpec {
  key: ThresholdKey;
  label: string;
  meaning: string;
  unit: string;
  /** Allowed range; `open` ends exclude the bound itself. */
  min: number;
  max: number;
  openMin?: boolean;
  openMax?: boolean;
  step: number;
}

// Ranges as the API checks them (assays.router.ts CallThresholdsBody).
const SPECS: Record<ThresholdKey, ThresholdSpec> = {
  fullAgonistAlpha: { key: 'fullAgonistAlpha', label: 'Full agonist at α ≥', meaning: 'Intrinsic activity (Emax over the reference full agonist’s) at or above which an agonist is called full.', unit: '', min: 0, max: 2, openMin: true, step: 0.05 },
  partialAgonistAlpha: { key: 'partialAgonistAlpha', label: 'Partial agonist at α ≥', meaning: 'Below the full threshold and at or above this, with a measured pEC50: partial agonist. Below it: no agonism.', unit: '', min: 0, max: 2, openMax: true, step: 0.05 },
  basalChange: { key: 'basalChange', label: 'Basal change', meaning: 'In a constitutively active system, a fall of the basal signal by at least this (% of the reference window) is inverse agonism; within ± this the basal is unchanged.', unit: '%', min: 0, max: 100, openMin: true, step: 1 },
  activityFloor: { key: 'activityFloor', label: 'Active at pKi / pKB / pIC50 ≥', meaning: 'Affinity or antagonist potency at or above which the compound counts as binding or antagonising (5 = 10 µM).', unit: '', min: 2, max: 14, step: 0.1 },
  pamFoldShift: { key: 'pamFoldShift', label: 'PAM at fold-shift ≥', meaning: 'Agonist EC50 without ÷ with the modulator at or above this: positive allosteric modulator.', unit: '×', min: 1, max: 1000, openMin: true, step: 0.5 },
  namFoldShift: { key: 'namFoldShift', label: 'NAM at fold-shift ≤', meaning: 'At or below this (a rightward shift): negative allosteric modulator.', unit: '×', min: 0, max: 1, openMin: true, openMax: true, step: 0.05 },
  emaxChange: { key: 'emaxChange', label: 'Emax change ≥', meaning: 'A rise (PAM) or fall (NAM) of the agonist’s maximum by at least this fraction (0.2 = 20 %).', unit: '', min: 0, max: 1, openMin: true, step: 0.05 },
  allostericAgonistAlpha: { key: 'allostericAgonistAlpha', label: 'Allosteric agonist at α alone ≥', meaning: 'The modulator applied alone reaching this intrinsic activity: allosteric agonist.', unit: '', min: 0, max: 2, openMin: true, step: 0.05 },
};

/** Which thresholds the rule reads for results of each kind of assay (domain/ligand-call.ts). */
const BY_KIND: Record<AssayKind, ThresholdKey[]> = {
  binding: ['activityFloor'],
  'functional-agonist': ['fullAgonistAlpha', 'partialAgonistAlpha', 'basalChange'],
  'functional-antagonist': ['activityFloor'],
  'allosteric-modulation': ['pamFoldShift', 'namFoldShift', 'emaxChange', 'allostericAgonistAlpha', 'fullAgonistAlpha', 'partialAgonistAlpha'],
};

function rangeText(s: ThresholdSpec): string {
  return `${s.openMin ? '>' : '≥'} ${s.min} and ${s.openMax ? '<' : '≤'} ${s.max}`;
}

/**
 * The thresholds the ligand-type rule applies to this assay's results: the defaults (common
 * practice, not a published standard) and the assay's own values; pharmacologists edit them, and
 * saving recomputes the calls these results feed.
 */
@Component({
  selector: 'lg-call-thresholds',
  imports: [MatButtonModule, MatIconModule, MatProgressBarModule],
  template: `
    <h2 id="thresholds-heading" class="lg-panel-title">Ligand-type call thresholds</h2>
    @if (answer.isLoading() && !answer.value()) {
      <mat-progress-bar mode="indeterminate" aria-label="Loading the thresholds" />
    } @else if (answer.error()) {
      <p class="lg-error-text" role="alert">{{ loadError() }} <button mat-button type="button" (click)="answer.reload()">Try again</button></p>
    } @else if (answer.value(); as t) {
      <p class="lead">
        The rule that suggests a ligand type per receptor reads this assay’s results with these thresholds.
        Defaults are <strong>common practice, not a published standard</strong>; set this assay’s own where its system calls for it.
        @if (canEdit()) { Saving recomputes the calls of every compound with approved results in this assay. }
      </p>
      <form (submit)="$event.preventDefault(); save()" novalidate>
        <table class="table" aria-label="Call thresholds of this assay">
          <thead>
            <tr><th scope="col">Threshold</th><th scope="col">This assay</th><th scope="col">Default (common practice)</th><th scope="col">What it decides</th></tr>
          </thead>
          <tbody>
            @for (s of specs(); track s.key) {
              <tr>
                <th scope="row">
                  @if (canEdit()) { <label [for]="'th-' + s.key">{{ s.label }}</label> } @else { {{ s.label }} }
                </th>
                <td class="value">
                  @if (canEdit()) {
                    <input [id]="'th-' + s.key" type="number" [step]="s.step" [value]="draft()[s.key]" (input)="edit(s.key, $event)" [attr.aria-invalid]="problems()[s.key] ? 'true' : null"
                      [attr.aria-describedby]="'th-help-' + s.key" [class.invalid]="!!problems()[s.key]" />
                    @if (s.unit) { <span class="unit">{{ s.unit }}</span> }
                  } @else {
                    <span>{{ t.effective[s.key] }}{{ s.unit ? ' ' + s.unit : '' }}</span>
                  }
                  @if (isOwn(s.key)) { <span class="lg-pill own">this assay’s</span> } @else { <span class="lg-pill default">default</span> }
                  @if (problems()[s.key]; as p) { <span class="lg-error-text small" role="alert">{{ p }}</span> }
                </td>
                <td class="num">{{ t.defaults[s.key] }}{{ s.unit ? ' ' + s.unit : '' }}</td>
                <td class="meaning" [id]="'th-help-' + s.key">{{ s.meaning }} <span class="range">Allowed: {{ rangeOf(s) }}.</span></td>
              </tr>
            }
          </tbody>
        </table>
        @if (error(); as message) { <p class="lg-error-text" role="alert">{{ message }}</p> }
        @if (canEdit()) {
          <div class="actions">
            <button mat-flat-button type="submit" [disabled]="busy() || !changed() || hasProblems()">Save and recompute the calls</button>
            <button mat-button type="button" (click)="resetToDefaults()" [disabled]="busy() || !hasOwn()">Use the defaults</button>
            @if (changed()) { <span class="pending">Not saved yet.</span> }
          </div>
        }
      </form>
      <p class="note">{{ t.note }}</p>
    }
  `,
  styles: `
    :host { display: flex; flex-direction: column; gap: 12px; }
    p { margin: 0; }
    .lead { font: var(--mat-sys-body-medium); color: var(--mat-sys-on-surface-variant); max-width: 900px; }
    .table { border-collapse: collapse; width: 100%; font-variant-numeric: tabular-nums; }
    .table th, .table td { text-align: left; padding: 6px 14px 6px 0; border-bottom: 1px solid var(--mat-sys-outline-variant); vertical-align: middle; }
    thead th { font: var(--mat-sys-label-medium); color: var(--mat-sys-on-surface-variant); white-space: nowrap; }
    tbody th { font: var(--mat-sys-label-large); white-space: nowrap; }
    .value { white-space: nowrap; }
    .value input { width: 90px; padding: 6px 8px; font: var(--mat-sys-body-large); border: 1px solid var(--mat-sys-outline); border-radius: 6px; background: var(--mat-sys-surface); color: var(--mat-sys-on-surface); }
    .value input:focus { outline: 2px solid var(--mat-sys-primary); outline-offset: 1px; }
    .value input.invalid { border-color: var(--mat-sys-error); }
    .unit { margin-left: 4px; }
    .value .lg-pill { margin-left: 8px; }
    .value .lg-error-text { display: block; white-space: normal; }
    .own { background: var(--mat-sys-secondary-container); color: var(--mat-sys-on-secondary-container); }
    .default { background: var(--mat-sys-surface-container-highest); color: var(--mat-sys-on-surface-variant); }
    .num { font-variant-numeric: tabular-nums; white-space: nowrap; }
    .meaning { font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); min-width: 280px; }
    .range { display: block; }
    .actions { display: flex; align-items: center; flex-wrap: wrap; gap: 8px; margin-top: 12px; }
    .pending { font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
    .note { font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
    .small { font: var(--mat-sys-body-small); }
  `,
  host: { class: 'lg-panel', role: 'region', 'aria-labelledby': 'thresholds-heading', 'data-testid': 'call-thresholds' },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CallThresholdsPanel {
  private readonly api = inject(MechanismApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);

  readonly assay = input.required<Assay>();
  /** The user may edit the thresholds (pharmacologists and admins). */
  readonly canEdit = input(false);
  /** After a save: the page reloads the assay (its version changed). */
  readonly saved = output<void>();

  protected readonly answer = rxResource({ params: () => this.assay().id, stream: ({ params }) => this.api.thresholds(params) });
  protected readonly loadError = computed(() => apiErrorMessage(this.answer.error(), 'The thresholds could not be loaded.'));
  /** The thresholds the rule reads for this assay (the basal change only in a constitutively active system). */
  protected readonly specs = computed(() => {
    const a = this.assay();
    return BY_KIND[a.kind].filter((k) => k !== 'basalChange' || a.constitutiveActivity).map((k) => SPECS[k]);
  });
  /** The values as typed (text), starting from the effective thresholds. */
  protected readonly draft = linkedSignal<Record<ThresholdKey, string>>(() => {
    const e = this.answer.value()?.effective;
    return Object.fromEntries((Object.keys(SPECS) as ThresholdKey[]).map((k) => [k, e ? String(e[k]) : ''])) as Record<ThresholdKey, string>;
  });
  protected readonly busy = signal(false);
  protected readonly error = signal<string | null>(null);
  private readonly serverProblems = signal<Partial<Record<ThresholdKey, string>>>({});

  /** Problems of the typed values: each against its range, then the pairs that must stay ordered. */
  protected readonly problems = computed<Partial<Record<ThresholdKey, string>>>(() => {
    const out: Partial<Record<ThresholdKey, string>> = { ...this.serverProblems() };
    const values = this.values();
    for (const s of this.specs()) {
      const text = this.draft()[s.key].trim();
      const v = values[s.key];
      if (!text) out[s.key] = 'Enter a number.';
      else if (!Number.isFinite(v)) out[s.key] = 'Must be a number.';
      else if ((s.openMin ? v <= s.min : v < s.min) || (s.openMax ? v >= s.max : v > s.max)) out[s.key] = `Must be ${rangeText(s)}.`;
    }
    if (!out.partialAgonistAlpha && !out.fullAgonistAlpha && values.partialAgonistAlpha >= values.fullAgonistAlpha) out.partialAgonistAlpha = `Must be below the full-agonist threshold (${values.fullAgonistAlpha}).`;
    return out;
  });
  protected readonly hasProblems = computed(() => Object.values(this.problems()).some(Boolean));
  private readonly values = computed(() => Object.fromEntries(Object.entries(this.draft()).map(([k, t]) => [k, t.trim() === '' ? NaN : Number(t)])) as unknown as CallThresholds);
  protected readonly changed = computed(() => {
    const e = this.answer.value()?.effective;
    return !!e && this.specs().some((s) => this.values()[s.key] !== e[s.key]);
  });
  protected readonly hasOwn = computed(() => Object.keys(this.answer.value()?.overrides ?? {}).length > 0);

  protected isOwn(key: ThresholdKey): boolean {
    const t = this.answer.value();
    return !!t && t.overrides[key] !== undefined && t.overrides[key] !== t.defaults[key];
  }

  protected rangeOf(s: ThresholdSpec): string {
    return rangeText(s);
  }

  protected edit(key: ThresholdKey, event: Event): void {
    const text = (event.target as HTMLInputElement).value;
    this.draft.update((d) => ({ ...d, [key]: text }));
    this.serverProblems.update((p) => ({ ...p, [key]: undefined }));
    this.error.set(null);
  }

  protected save(): void {
    const t = this.answer.value();
    if (!t || this.hasProblems() || !this.changed()) return;
    // The assay's own values: the ones shown that differ from the default, and those it already had for other kinds.
    const own: Partial<CallThresholds> = { ...t.overrides };
    for (const s of this.specs()) {
      const v = this.values()[s.key];
      if (v === t.defaults[s.key]) delete own[s.key];
      else own[s.key] = v;
    }
    this.send(Object.keys(own).length ? own : null);
  }

  protected resetToDefaults(): void {
    const data: ConfirmData = {
      title: 'Use the default thresholds?',
      message: 'This assay’s own thresholds are removed and the defaults (common practice) apply again; the calls its approved results feed are recomputed.',
      confirm: 'Use the defaults',
    };
    this.dialog
      .open(ConfirmDialog, { data })
      .afterClosed()
      .pipe(filter(Boolean))
      .subscribe(() => this.send(null));
  }

  private send(thresholds: Partial<CallThresholds> | null): void {
    this.busy.set(true);
    this.error.set(null);
    this.api.saveThresholds(this.assay().id, thresholds, this.assay().version).subscribe({
      next: (answer) => {
        this.busy.set(false);
        this.answer.set({ ...answer, note: answer.note });
        const n = answer.recomputed ?? 0;
        this.snackBar.open(`Thresholds saved; ${n} ligand-type call${n === 1 ? '' : 's'} recomputed.`, 'OK', { duration: 6000 });
        this.saved.emit();
      },
      error: (err: unknown) => {
        this.busy.set(false);
        if (apiErrorCode(err) === 'stale_version') {
          this.error.set('Someone changed this assay meanwhile; reload the page and try again.');
          return;
        }
        const problems: Partial<Record<ThresholdKey, string>> = {};
        for (const p of apiFieldProblems(err)) {
          const key = p.field.replace(/^thresholds\./, '') as ThresholdKey;
          if (key in SPECS) problems[key] = p.message;
        }
        this.serverProblems.set(problems);
        this.error.set(apiErrorMessage(err, 'The thresholds could not be saved.'));
      },
    });
  }
}
