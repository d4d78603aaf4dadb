import { afterNextRender, ChangeDetectionStrategy, Component, ElementRef, inject, input, OnDestroy, output } from '@angular/core';
import { CanvasEditor, Molecule, SmilesParser } from 'openchemlib';

/** What the chemist drew: a molfile to send, a SMILES to show; null when the canvas is empty. */
export interface Drawn {
  molfile: string;
  smiles: string;
}

function looksLikeMolfile(text: string): boolean {
  return /M {2}END/.test(text) || /\n.*(V2000|V3000)/.test(text);
}

/** OpenChemLib's drawing canvas with its toolbar; the OCL objects stay inside this component. */
@Component({
  selector: 'lg-structure-editor',
  template: '',
  styles: `
    :host {
      display: block;
      height: 360px;
      border: 1px solid var(--mat-sys-outline-variant);
      border-radius: 8px;
      overflow: hidden;
      background: #fff;
    }
    :host(:focus-within) {
      outline: 2px solid var(--mat-sys-primary);
      outline-offset: 1px;
    }
  `,
  host: { role: 'application', 'aria-label': 'Structure editor: draw with the toolbar on the left' },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StructureEditor implements OnDestroy {
  private readonly host = inject<ElementRef<HTMLElement>>(ElementRef);
  private editor: CanvasEditor | null = null;
  /** True while `show` changes the canvas, so its own change events are not taken for drawing. */
  private showing = false;

  /**
   * Draw a substructure query (an OpenChemLib fragment) rather than a molecule: the editor then
   * offers and keeps query features (any atom, atom lists, ring or chain bonds…), `show` also
   * reads SMARTS, and the molfile it emits carries those features. Read once, when the canvas is made.
   */
  readonly fragment = input(false);

  /** The chemist changed the drawing (not emitted for `show`). */
  readonly drawn = output<Drawn | null>();

  constructor() {
    afterNextRender(() => this.createEditor());
  }

  ngOnDestroy(): void {
    this.editor?.destroy();
    this.editor = null;
  }

  /** Shows a pasted SMILES or molfile on the canvas; clears it (false) when OpenChemLib cannot read it. */
  show(text: string): boolean {
    const editor = this.editor;
    if (!editor) return false;
    const trimmed = text.trim();
    this.showing = true;
    try {
      if (!trimmed) {
        editor.setMolecule(this.asDrawn(new Molecule(0, 0)));
        return true;
      }
      editor.setMolecule(this.asDrawn(looksLikeMolfile(text) ? Molecule.fromMolfile(text) : this.fromLine(trimmed)));
      return true;
    } catch {
      editor.setMolecule(this.asDrawn(new Molecule(0, 0)));
      return false;
    } finally {
      this.showing = false;
    }
  }

  /** A SMILES, or in fragment mode also a SMARTS. */
  private fromLine(text: string): Molecule {
    return this.fragment() ? new SmilesParser({ smartsMode: 'guess' }).parseMolecule(text) : Molecule.fromSmiles(text);
  }

  private asDrawn(mol: Molecule): Molecule {
    if (this.fragment()) mol.setFragment(true);
    return mol;
  }

  private createEditor(): void {
    this.editor = new CanvasEditor(this.host.nativeElement, { initialMode: 'molecule', initialFragment: this.fragment() });
    this.editor.setOnChangeListener((event) => {
      if (event.type === 'molecule' && event.isUserEvent && !this.showing) this.emitDrawing();
    });
  }

  private emitDrawing(): void {
    const mol = this.editor?.getMolecule();
    if (!mol || mol.getAllAtoms() === 0) {
      this.drawn.emit(null);
      return;
    }
    this.drawn.emit({ molfile: mol.toMolfile(), smiles: mol.toIsomericSmiles() });
  }
}
