import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';
import type { AssayKind, FitFlag, Result, ResultValue, ValueKey } from './assay-api';
import { FLAG_LABELS, formatMolar, VALUE_LABELS } from './assay-labels';

interface Row {
  key: ValueKey | 'rSquared';
  label: string;
  value: string;
  se: string;
  ci: string;
  note: string;
}

const P_KEYS: readonly ValueKey[] = ['pKi', 'pKB', 'pEC50', 'pIC50'];

function num(v: number | null | undefined, digits: number): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(digits).replace(/^-/, '−');
}

/** A change with its sign: +20, −35. */
function signed(v: number, digits: number): string {
  const rounded = Number(v.toFixed(digits));
  return rounded === 0 ? num(0, digits) : (rounded > 0 ? '+' : '') + num(rounded, digits);
}

function row(key: ValueKey, v: ResultValue, digits: number, unit = '', note = ''): Row {
  const q = v.qualifier === '=' ? '' : `${v.qualifier} `;
  const ci = v.ci95 ? `${num(v.ci95[0], digits)} to ${num(v.ci95[1], digits)}${unit}` : '';
  const n = v.n ? `n = ${v.n}` : '';
  return { key, label: VALUE_LABELS[key], value: `${q}${num(v.value, digits)}${unit}`, se: v.se != null ? `± ${num(v.se, digits)}` : '', ci, note: [note, n].filter(Boolean).join(' · ') };
}

/** A result's values (potency with SE and 95 % CI, Emax, α, Hill slope, R²) and the fit's flags in words. */
@Component({
  selector: 'lg-result-values',
  imports: [MatIconModule],
  template: `
    <table class="values" [attr.aria-label]="'Values of ' + result().compound.registryNumber">
      <thead>
        <tr><th scope="col">Parameter</th><th scope="col" class="num">Value</th><th scope="col" class="num">SE</th><th scope="col">95 % CI</th></tr>
      </thead>
      <tbody>
        @for (r of rows(); track r.key) {
          <tr [class.potency]="isPotency(r.key)">
            <th scope="row">{{ r.label }}</th>
            <td class="num value">{{ r.value }}</td>
            <td class="num">{{ r.se }}</td>
            <td class="ci">{{ r.ci }}@if (r.note) { <span class="note">{{ r.note }}</span> }</td>
          </tr>
        } @empty {
          <tr><td colspan="4" class="empty">No value could be computed from this curve; see the notes below.</td></tr>
        }
      </tbody>
    </table>
    @if (flags().length || notes().length) {
      <ul class="flags" aria-label="Notes on the fit">
        @for (f of flags(); track f.flag) {
          <li><mat-icon inline>warning</mat-icon><span><strong>{{ f.label }}.</strong> {{ f.message }}</span></li>
        }
        @for (n of notes(); track $index) {
          <li><mat-icon inline>push_pin</mat-icon><span>{{ n }}</span></li>
        }
      </ul>
    }
    @if (result().note) {
      <p class="manual"><strong>Measured:</strong> {{ result().note }}</p>
    }
  `,
  styles: `
    :host { display: block; min-width: 0; }
    .values { border-collapse: collapse; width: 100%; font-variant-numeric: tabular-nums; }
    th, td { text-align: left; padding: 4px 8px 4px 0; border-bottom: 1px solid var(--mat-sys-outline-variant); vertical-align: baseline; }
    thead th { font: var(--mat-sys-label-small); color: var(--mat-sys-on-surface-variant); }
    tbody th { font: var(--mat-sys-label-large); white-space: nowrap; }
    .num { text-align: right; white-space: nowrap; }
    .value { font-weight: 500; }
    .potency .value { font: var(--mat-sys-title-small); color: var(--mat-sys-primary); }
    .ci { color: var(--mat-sys-on-surface-variant); white-space: nowrap; padding-left: 8px; }
    .note { display: block; font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); white-space: normal; }
    .empty { color: var(--mat-sys-on-surface-variant); padding: 8px 0; }
    .flags { list-style: none; margin: 10px 0 0; padding: 0; display: flex; flex-direction: column; gap: 6px; }
    .flags li { display: flex; gap: 6px; align-items: baseline; padding: 6px 8px; border-radius: 8px; font: var(--mat-sys-body-small);
      background: var(--mat-sys-tertiary-container); color: var(--mat-sys-on-tertiary-container); }
    .flags mat-icon { flex: none; }
    .manual { margin: 10px 0 0; font: var(--mat-sys-body-small); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ResultValues {
  readonly result = input.required<Result>();
  /** The assay's kind names Emax in its own terms (binding reports the curve's floor as Bottom). */
  readonly kind = input<AssayKind | null>(null);

  protected readonly rows = computed<Row[]>(() => {
    const r = this.result();
    const v = r.values;
    const fixed = (name: 'top' | 'bottom' | 'hillSlope') => (r.fit?.params[name]?.fixed ? 'fixed' : '');
    const rows: Row[] = [];
    for (const key of P_KEYS) {
      const value = v[key];
      if (!value) continue;
      const molar = key === 'pEC50' || key === 'pIC50' ? `${key === 'pEC50' ? 'EC50' : 'IC50'} ${value.qualifier === '=' ? '' : value.qualifier === '<' ? '> ' : '< '}${formatMolar(Math.pow(10, -value.value))}` : '';
      rows.push(row(key, value, 2, '', molar));
    }
    const kind = this.kind();
    if (v.emax && kind !== 'binding') rows.push({ ...row('emax', v.emax, 1, ' %'), label: kind === 'functional-antagonist' ? 'Max. inhibition' : 'Emax' });
    if (v.alpha) rows.push(row('alpha', v.alpha, 2));
    if (v.hillSlope) rows.push(row('hillSlope', v.hillSlope, 2, '', fixed('hillSlope')));
    if (v.top) rows.push(row('top', v.top, 1, ' %', fixed('top')));
    if (v.bottom) rows.push(row('bottom', v.bottom, 1, ' %', fixed('bottom')));
    // Mechanism analyses (operational model, Schild, allosteric modulation, basal change).
    for (const key of ['pA2', 'schildSlope', 'logTau', 'logKA', 'logTauKA', 'logKB', 'logCooperativity'] as const) {
      if (v[key]) rows.push(row(key, v[key]!, 2, '', key === 'logTau' && v[key]!.qualifier === '>' ? 'reaches the system maximum: τ is a lower bound' : ''));
    }
    if (v.foldShift) rows.push({ ...row('foldShift', v.foldShift, 2, '×'), note: v.foldShift.value > 1 ? 'EC50 divided by this (leftward shift)' : 'EC50 multiplied by 1/this (rightward shift)' });
    if (v.emaxChange) rows.push({ ...row('emaxChange', { ...v.emaxChange, value: v.emaxChange.value * 100, se: null, ci95: null }, 0, ' %'), value: signed(v.emaxChange.value * 100, 0) + ' %' });
    if (v.basalChange) rows.push({ ...row('basalChange', v.basalChange, 1, ' %'), value: signed(v.basalChange.value, 1) + ' %', note: '% of the reference window; a fall means inverse agonism' });
    const fit = r.fit;
    if (fit && fit.rSquared !== null && Number.isFinite(fit.rSquared)) {
      rows.push({ key: 'rSquared', label: 'R²', value: num(fit.rSquared, 3), se: '', ci: '', note: `${fit.n} points, ${fit.dof} degrees of freedom` });
    }
    return rows;
  });

  protected readonly flags = computed(() => {
    const fit = this.result().fit;
    if (!fit) return [];
    return fit.flags.map((flag: FitFlag, i) => ({ flag, label: FLAG_LABELS[flag] ?? flag, message: fit.messages[i] ?? '' }));
  });

  /** Messages beyond the flags' own (for example, a plateau held at its control level). */
  protected readonly notes = computed(() => {
    const fit = this.result().fit;
    return fit ? fit.messages.slice(fit.flags.length) : [];
  });

  protected isPotency(key: string): boolean {
    return (P_KEYS as readonly string[]).includes(key);
  }
}
