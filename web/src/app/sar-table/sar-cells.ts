import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { RouterLink } from '@angular/router';
import { DomSanitizer, type SafeHtml } from '@angular/platform-browser';
import { Molecule } from 'openchemlib';
import { MatIconModule } from '@angular/material/icon';
import type { ICellRendererAngularComp, ITooltipAngularComp } from 'ag-grid-angular';
import type { ICellRendererParams, ITooltipParams } from 'ag-grid-community';
import { MoleculeView } from '../shared/molecule-view';
import { MatchDepiction } from '../compounds/compound-list/match-depiction';
import { SarApi, type CellResult, type SarCell, type SarMargin, type SarParameter, type SarRow } from './sar-api';
import { cellNotes, cellText, marginText, qualified, WINDOW_WORDS, DECIMALS } from './sar-format';

/** Structure thumbnail; with the substructure filter on, the matched atoms are highlighted. */
@Component({
  selector: 'lg-sar-structure-cell',
  imports: [MoleculeView, MatchDepiction, RouterLink],
  template: `
    @if (row(); as r) {
      <a [routerLink]="['/compounds', r.registryNumber]" [attr.aria-label]="'Open ' + r.registryNumber" tabindex="-1">
        @if (r.match) {
          <lg-match-depiction [compoundId]="r.id" [atoms]="r.match" [width]="128" [height]="84" [alt]="'Structure of ' + r.registryNumber + ', query atoms highlighted'" />
        } @else {
          <lg-molecule-view [idCode]="r.idCode" [width]="128" [height]="84" [alt]="'Structure of ' + r.registryNumber" />
        }
      </a>
    }
  `,
  styles: `
    :host { display: flex; align-items: center; height: 100%; }
    a { display: inline-flex; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StructureCell implements ICellRendererAngularComp {
  protected readonly row = signal<SarRow | null>(null);
  agInit(params: ICellRendererParams<SarRow>): void {
    this.row.set(params.data ?? null);
  }
  refresh(params: ICellRendererParams<SarRow>): boolean {
    this.row.set(params.data ?? null);
    return true;
  }
}

/** Registry number (a link to the compound) and name. */
@Component({
  selector: 'lg-sar-compound-cell',
  imports: [RouterLink],
  template: `
    @if (row(); as r) {
      <a class="number" [routerLink]="['/compounds', r.registryNumber]">{{ r.registryNumber }}</a>
      @if (r.name) {
        <span class="name">{{ r.name }}</span>
      }
    }
  `,
  styles: `
    :host { display: flex; flex-direction: column; justify-content: center; height: 100%; line-height: 1.3; }
    .number { font-weight: 600; color: var(--mat-sys-primary); }
    .name { font-size: 12px; color: var(--mat-sys-on-surface-variant); white-space: nowrap; overflow: hidden; text-overflow: ellipsis; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CompoundCell implements ICellRendererAngularComp {
  protected readonly row = signal<SarRow | null>(null);
  agInit(params: ICellRendererParams<SarRow>): void {
    this.row.set(params.data ?? null);
  }
  refresh(params: ICellRendererParams<SarRow>): boolean {
    this.row.set(params.data ?? null);
    return true;
  }
}

export interface ValueCellParams {
  parameter: SarParameter;
  column: string;
}

/** "mean ± SD (n)" with its qualifier; marks for censored values left out and submitted results. */
@Component({
  selector: 'lg-sar-value-cell',
  template: `
    @if (cell(); as c) {
      <span class="value">{{ text() }}</span>
      @if (c.flag === 'censored-excluded') {
        <span class="mark" title="censored values left out of the mean" aria-label="censored values left out of the mean">†</span>
      }
      @if (c.submitted) {
        <span class="mark submitted" title="includes submitted results not yet approved" aria-label="includes submitted results">S</span>
      }
    } @else {
      <span class="empty" aria-label="no result">–</span>
    }
  `,
  styles: `
    :host { display: flex; align-items: center; gap: 4px; height: 100%; font-variant-numeric: tabular-nums; }
    .empty { opacity: 0.45; }
    .mark { font-size: 11px; font-weight: 700; }
    .submitted { border: 1px solid currentColor; border-radius: 3px; padding: 0 3px; line-height: 14px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ValueCell implements ICellRendererAngularComp {
  protected readonly cell = signal<SarCell | null>(null);
  private parameter: SarParameter = 'pKi';
  protected readonly text = computed(() => (this.cell() ? cellText(this.parameter, this.cell()!) : ''));
  agInit(params: ICellRendererParams<SarRow> & ValueCellParams): void {
    this.parameter = params.parameter;
    this.cell.set(params.data?.cells[params.column] ?? null);
  }
  refresh(params: ICellRendererParams<SarRow> & ValueCellParams): boolean {
    this.agInit(params);
    return true;
  }
}

/** A selectivity margin with its fold; inside the window it is marked, not only coloured. */
@Component({
  selector: 'lg-sar-margin-cell',
  imports: [MatIconModule],
  template: `
    @if (margin(); as m) {
      @if (m.window === 'inside') {
        <mat-icon class="warn" aria-hidden="true">warning</mat-icon>
      } @else if (m.window === 'uncertain') {
        <mat-icon class="maybe" aria-hidden="true">help_outline</mat-icon>
      }
      <span [attr.aria-label]="label()">{{ text() }}</span>
    } @else {
      <span class="empty" aria-label="no margin">–</span>
    }
  `,
  styles: `
    :host { display: flex; align-items: center; gap: 4px; height: 100%; font-variant-numeric: tabular-nums; }
    mat-icon { font-size: 16px; width: 16px; height: 16px; }
    .warn { color: var(--mat-sys-error); }
    .maybe { color: var(--mat-sys-on-surface-variant); }
    .empty { opacity: 0.45; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MarginCell implements ICellRendererAngularComp {
  protected readonly margin = signal<SarMargin | null>(null);
  protected readonly text = computed(() => (this.margin() ? marginText(this.margin()!) : ''));
  protected readonly label = computed(() => (this.margin() ? `${this.text()}, ${WINDOW_WORDS[this.margin()!.window]}` : ''));
  agInit(params: ICellRendererParams<SarRow> & { targetId?: number }): void {
    const r = params.data;
    this.margin.set(r ? (params.targetId !== undefined ? r.margins[params.targetId] ?? null : r.worstMargin) : null);
  }
  refresh(params: ICellRendererParams<SarRow> & { targetId?: number }): boolean {
    this.agInit(params);
    return true;
  }
}

/** An R-group: its small depiction and SMILES; "H" for none; members off the core say so. */
@Component({
  selector: 'lg-sar-rgroup-cell',
  template: `
    @if (problem()) {
      <span class="apart" [title]="'Not decomposed: ' + problem()">not on core</span>
    } @else if (smiles() === 'H') {
      <span class="hydrogen">H</span>
    } @else if (smiles()) {
      @if (svg(); as markup) {
        <span class="svg" role="img" [attr.aria-label]="'R-group ' + smiles()" [innerHTML]="markup"></span>
      }
      <code>{{ smiles() }}</code>
    }
  `,
  styles: `
    :host { display: flex; align-items: center; gap: 6px; height: 100%; overflow: hidden; }
    .svg { display: inline-flex; width: 64px; height: 48px; }
    .svg ::ng-deep svg { max-width: 100%; max-height: 100%; }
    code { font-size: 11px; white-space: nowrap; overflow: hidden; text-overflow: ellipsis; }
    .hydrogen { font-weight: 600; padding-left: 8px; }
    .apart { font-size: 11px; border: 1px dashed var(--mat-sys-outline); border-radius: 4px; padding: 1px 5px; color: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RGroupCell implements ICellRendererAngularComp {
  private readonly sanitizer = inject(DomSanitizer);
  protected readonly smiles = signal<string | null>(null);
  protected readonly problem = signal<string | null>(null);
  /** The substituent drawn with its attachment labelled R (read as a xenon placeholder, relabelled). */
  protected readonly svg = computed<SafeHtml | null>(() => {
    const smiles = this.smiles();
    if (!smiles || smiles === 'H') return null;
    try {
      const mol = Molecule.fromSmiles(smiles.replaceAll('*', '[Xe]'));
      for (let a = 0; a < mol.getAllAtoms(); a++) if (mol.getAtomicNo(a) === 54) mol.setAtomCustomLabel(a, 'R');
      // OpenChemLib's own markup for a parsed molecule; it escapes atom labels, the only text it writes.
      return this.sanitizer.bypassSecurityTrustHtml(mol.toSVG(64, 48, undefined, { autoCrop: true, autoCropMargin: 4, maxAVBL: 14, suppressChiralText: true }));
    } catch {
      return null;
    }
  });
  agInit(params: ICellRendererParams<SarRow> & { label: string }): void {
    this.smiles.set(params.data?.rgroups?.[params.label] ?? null);
    this.problem.set(params.data?.rgroupProblem ?? null);
  }
  refresh(params: ICellRendererParams<SarRow> & { label: string }): boolean {
    this.agInit(params);
    return true;
  }
}

/** A value cell's tooltip: its aggregate in words, then the individual results with runs and dates. */
@Component({
  selector: 'lg-sar-cell-tooltip',
  template: `
    <div class="tip" role="tooltip">
      <strong>{{ heading() }}</strong>
      @if (cell(); as c) {
        <div>{{ summary() }}</div>
        @for (note of notes(); track note) {
          <div class="note">{{ note }}</div>
        }
      }
      @if (results(); as list) {
        <table>
          <tbody>
            @for (r of list; track r.id) {
              <tr>
                <td>{{ r.assay.code }}</td>
                <td>{{ r.runDate ?? 'entered by hand' }}</td>
                <td class="num">{{ valueOf(r) }}</td>
                <td>{{ r.status }}</td>
              </tr>
            } @empty {
              <tr><td colspan="4">No results.</td></tr>
            }
          </tbody>
        </table>
        <div class="hint">Click the cell to see the curves.</div>
      } @else {
        <div class="hint">Loading the individual results…</div>
      }
    </div>
  `,
  styles: `
    .tip {
      background: var(--mat-sys-inverse-surface);
      color: var(--mat-sys-inverse-on-surface);
      border-radius: 6px;
      padding: 8px 10px;
      font-size: 12px;
      max-width: 420px;
      box-shadow: var(--mat-sys-level2);
    }
    table { border-collapse: collapse; margin-top: 6px; }
    td { padding: 1px 8px 1px 0; white-space: nowrap; }
    .num { text-align: right; font-variant-numeric: tabular-nums; }
    .note, .hint { opacity: 0.8; margin-top: 2px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CellTooltip implements ITooltipAngularComp {
  private readonly api = inject(SarApi);
  protected readonly heading = signal('');
  protected readonly cell = signal<SarCell | null>(null);
  protected readonly results = signal<CellResult[] | null>(null);
  private parameter: SarParameter = 'pKi';
  protected readonly summary = computed(() => (this.cell() ? cellText(this.parameter, this.cell()!) : ''));
  protected readonly notes = computed(() => (this.cell() ? cellNotes(this.cell()!) : []));

  agInit(params: ITooltipParams<SarRow> & { parameter: SarParameter; column: string; heading: string; includeSubmitted: boolean }): void {
    const row = params.data;
    this.parameter = params.parameter;
    this.heading.set(`${row?.registryNumber ?? ''} · ${params.heading}`);
    this.cell.set(row?.cells[params.column] ?? null);
    if (!row) return;
    this.api.cell(row.id, params.column, params.includeSubmitted).subscribe({
      next: (items) => this.results.set(items),
      error: () => this.results.set([]),
    });
  }

  protected valueOf(r: CellResult): string {
    const v = r.values[this.parameter];
    return v ? qualified(v.value, v.qualifier, DECIMALS[this.parameter]) : '–';
  }
}

/** A receptor's ligand-type call: a computed suggestion, or a pharmacologist's override (marked). */
@Component({
  selector: 'lg-sar-call-cell',
  imports: [MatIconModule],
  template: `
    @if (entry(); as e) {
      <span class="call" [attr.data-call]="e.call">{{ e.call }}</span>
      @if (e.source === 'manual') {
        <mat-icon class="mark" aria-label="set by a pharmacologist" title="set by a pharmacologist (override)">person</mat-icon>
      }
      @if (e.contradicted) {
        <mat-icon class="flag" aria-label="a later result disagrees: review" title="a later computed call disagrees with this override: review it">flag</mat-icon>
      }
    } @else {
      <span class="empty" aria-label="no call">–</span>
    }
  `,
  styles: `
    :host { display: flex; align-items: center; gap: 4px; height: 100%; line-height: 1.2; }
    .call { font-size: 12px; white-space: normal; }
    mat-icon { font-size: 15px; width: 15px; height: 15px; }
    .flag { color: var(--mat-sys-error); }
    .empty { opacity: 0.45; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CallCell implements ICellRendererAngularComp {
  protected readonly entry = signal<SarRow['calls'][string] | null>(null);
  agInit(params: ICellRendererParams<SarRow> & { targetId: number }): void {
    this.entry.set(params.data?.calls?.[params.targetId] ?? null);
  }
  refresh(params: ICellRendererParams<SarRow> & { targetId: number }): boolean {
    this.agInit(params);
    return true;
  }
}
