import { ChangeDetectionStrategy, Component, computed, effect, inject, input, signal } from '@angular/core';
import { CompoundApi } from '../compound-api';

/**
 * A compound drawn by the server with the atoms a substructure search matched highlighted
 * (GET /api/compounds/:id/depiction.svg?highlight=…). The request goes through HttpClient, so the
 * sign-in token is added as for every API call; the SVG is shown from a blob: address in an <img>,
 * which runs nothing inside it and keeps its element ids apart from the page's.
 */
@Component({
  selector: 'lg-match-depiction',
  template: `
    @if (src(); as url) {
      <img [src]="url" [alt]="alt()" [attr.width]="width()" [attr.height]="height()" />
    } @else if (failed()) {
      <span class="none">no depiction</span>
    }
  `,
  styles: `
    :host {
      display: inline-flex;
      align-items: center;
      justify-content: center;
      width: var(--lg-match-width);
      height: var(--lg-match-height);
      max-width: 100%;
    }
    img {
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
    '[style.--lg-match-width.px]': 'width()',
    '[style.--lg-match-height.px]': 'height()',
    '[attr.data-highlighted]': 'atoms().length',
  },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MatchDepiction {
  private readonly api = inject(CompoundApi);

  readonly compoundId = input.required<number>();
  /** Atom indices of the compound to highlight. */
  readonly atoms = input<readonly number[]>([]);
  readonly width = input(132);
  readonly height = input(84);
  readonly alt = input('Chemical structure with the matched atoms highlighted');

  private readonly url = signal<string | null>(null);
  protected readonly src = this.url.asReadonly();
  protected readonly failed = signal(false);

  private readonly request = computed(() => ({ id: this.compoundId(), atoms: this.atoms(), w: this.width(), h: this.height() }));

  /** Fetches the drawing whenever the compound or the match changes; frees the blob address after. */
  private readonly load = effect((onCleanup) => {
    const { id, atoms, w, h } = this.request();
    let objectUrl: string | null = null;
    this.url.set(null);
    this.failed.set(false);
    const sub = this.api.depiction(id, w, h, atoms).subscribe({
      next: (blob) => {
        objectUrl = URL.createObjectURL(blob);
        this.url.set(objectUrl);
      },
      error: () => {
        this.url.set(null);
        this.failed.set(true);
      },
    });
    onCleanup(() => {
      sub.unsubscribe();
      if (objectUrl) URL.revokeObjectURL(objectUrl);
    });
  });
}
