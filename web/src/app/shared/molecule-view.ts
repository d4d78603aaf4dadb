import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { DomSanitizer, type SafeHtml } from '@angular/platform-browser';
import { Molecule } from 'openchemlib';

/** Reads one of the three encodings; null when there is nothing to draw or it does not parse. */
function toMolecule(idCode: string | null, smiles: string | null, molfile: string | null): Molecule | null {
  try {
    if (idCode) return Molecule.fromIDCode(idCode);
    if (molfile) return Molecule.fromMolfile(molfile);
    if (smiles) return Molecule.fromSmiles(smiles);
  } catch {
    return null;
  }
  return null;
}

/**
 * Drawings already made, by encoding and size: grids re-create their cells while scrolling, and
 * parsing plus layout costs milliseconds per structure. Oldest entries go first past the limit.
 */
const DRAWN = new Map<string, string>();
const DRAWN_LIMIT = 3000;

function remember(key: string, markup: string): string {
  if (DRAWN.size >= DRAWN_LIMIT) DRAWN.delete(DRAWN.keys().next().value!);
  DRAWN.set(key, markup);
  return markup;
}

/**
 * A structure drawn as SVG by OpenChemLib in the browser. OpenChemLib is large (about 1 MB):
 * only the lazily loaded compound pages import this component.
 */
@Component({
  selector: 'lg-molecule-view',
  template: `
    @if (svg(); as markup) {
      <div class="svg" [innerHTML]="markup"></div>
    } @else {
      <span class="none">no depiction</span>
    }
  `,
  styles: `
    :host {
      display: inline-flex;
      align-items: center;
      justify-content: center;
      width: var(--lg-molecule-width);
      height: var(--lg-molecule-height);
      max-width: 100%;
    }
    .svg {
      display: contents;
    }
    .svg ::ng-deep svg {
      max-width: 100%;
      max-height: 100%;
    }
    .none {
      font: var(--mat-sys-label-small);
      color: var(--mat-sys-on-surface-variant);
      border: 1px dashed var(--mat-sys-outline-variant);
      border-radius: 6px;
      padding: 2px 6px;
    }
  `,
  host: {
    role: 'img',
    '[attr.aria-label]': 'label()',
    '[style.--lg-molecule-width.px]': 'width()',
    '[style.--lg-molecule-height.px]': 'height()',
  },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MoleculeView {
  private readonly sanitizer = inject(DomSanitizer);

  readonly idCode = input<string | null | undefined>(null);
  readonly smiles = input<string | null | undefined>(null);
  readonly molfile = input<string | null | undefined>(null);
  readonly width = input(160);
  readonly height = input(120);
  /** Longest average bond length in px (OpenChemLib's maxAVBL); larger draws a small molecule bigger. */
  readonly bondLength = input<number | null>(null);
  /** Text for screen readers; defaults to a generic description. */
  readonly alt = input<string | null>(null);

  protected readonly svg = computed<SafeHtml | null>(() => {
    const idCode = this.idCode() ?? null;
    const smiles = this.smiles() ?? null;
    const molfile = this.molfile() ?? null;
    const bond = this.bondLength();
    const key = `${this.width()}|${this.height()}|${bond ?? ''}|${idCode ?? ''}|${idCode ? '' : smiles ?? ''}|${idCode || smiles ? '' : molfile ?? ''}`;
    let markup = DRAWN.get(key);
    if (markup === undefined) {
      const mol = toMolecule(idCode, smiles, molfile);
      if (!mol || mol.getAllAtoms() === 0) return null;
      try {
        markup = remember(key, mol.toSVG(this.width(), this.height(), undefined, {
          autoCrop: true,
          autoCropMargin: 8,
          suppressChiralText: true,
          ...(bond ? { maxAVBL: bond } : {}),
        }));
      } catch {
        return null;
      }
    }
    // OpenChemLib's own markup for a parsed molecule; it escapes atom labels, the only text it writes.
    return this.sanitizer.bypassSecurityTrustHtml(markup);
  });

  protected readonly label = computed(() => this.alt() ?? (this.svg() ? 'Chemical structure' : 'No depiction available'));
}
