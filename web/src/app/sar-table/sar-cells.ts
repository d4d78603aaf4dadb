import { ChangeDetectionStrategy, Component, computed, inject, OnDestroy, signal } from '@angular/core';
import { RouterLink } from '@angular/router';
import { DomSanitizer, type SafeHtml } from '@angular/platform-browser';
import { Molecule } from 'openchemlib';
import type { ICellRendererAngularComp, ITooltipAngularComp } from 'ag-grid-angular';
import type { ICellRendererParams, ITooltipParams } from 'ag-grid-community';
import { MoleculeView } from '../shared/molecule-view';
import { MatchDepiction } from '../compounds/compound-list/match-depiction';
import { SarApi, type CellResult, type SarCell, type SarParameter, type SarRow } from './sar-api';
import { cellNotes, cellText, qualified, DECIMALS } from './sar-format';

/** Drawings wait for an idle moment, so scrolling never waits for OpenChemLib's layout. */
function whenIdle(run: () => void): () => void {
  const w = window as Window & { requestIdleCallback?: (cb: () => void, o?: { timeout: number }) => number; cancelIdleCallback?: (id: number) => void };
  if (w.requestIdleCallback) {
    const id = w.requestIdleCallback(run, { timeout: 250 });
    return () => w.cancelIdleCallback?.(id);
  }
  const id = setTimeout(run, 16);
  return () => clearTimeout(id);
}

/** Structure thumbnail; with the substructure filter on, the matched atoms are highlighted. */
@Component({
  selector: 'lg-sar-structure-cell',
  imports: [MoleculeView, MatchDepiction, RouterLink],
  template: `
    @if (row(); as r) {
      <a [routerLink]="['/compounds', r.registryNumber]" [attr.aria-label]="'Open ' + r.registryNumber" tabindex="-1">
        @if (!ready()) {
          <span class="pending" aria-hidden="true"></span>
        } @else if (r.match) {
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
    .pending { display: inline-block; width: 128px; height: 84px; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StructureCell implements ICellRendererAngularComp, OnDestroy {
  protected readonly row = signal<SarRow | null>(null);
  protected readonly ready = signal(false);
  private cancel: (() => void) | null = null;
  agInit(params: ICellRendererParams<SarRow>): void {
    this.row.set(params.data ?? null);
    this.cancel = whenIdle(() => this.ready.set(true));
  }
  refresh(params: ICellRendererParams<SarRow>): boolean {
    this.row.set(params.data ?? null);
    return true;
  }
  ngOnDestroy(): void {
    this.cancel?.();
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

/** Substituent drawings by SMILES: a series has few distinct substituents, drawn once each. */
const RGROUP_SVG = new Map<string, string | null>();

function rgroupMarkup(smiles: string): string | null {
  if (RGROUP_SVG.has(smiles)) return RGROUP_SVG.get(smiles)!;
  let markup: string | null = null;
  try {
    const mol = Molecule.fromSmiles(smiles.replaceAll('*', '[Xe]'));
    for (let a = 0; a < mol.getAllAtoms(); a++) if (mol.getAtomicNo(a) === 54) mol.setAtomCustomLabel(a, 'R');
    markup = mol.toSVG(64, 48, undefined, { autoCrop: true, autoCropMargin: 4, maxAVBL: 14, suppressChiralText: true });
  } catch {
    markup = null;
  }
  if (RGROUP_SVG.size > 2000) RGROUP_SVG.clear();
  RGROUP_SVG.set(smiles, markup);
  return markup;
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
    const markup = rgroupMarkup(smiles);
    // OpenChemLib's own markup for a parsed molecule; it escapes atom labels, the only text it writes.
    return markup ? this.sanitizer.bypassSecurityTrustHtml(markup) : null;
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
