import { ChangeDetectionStrategy, Component, input } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';
import type { NavItem } from './nav-items';

/** Placeholder for a section that is not built yet, clearly marked as such. */
@Component({
  selector: 'lg-coming-soon',
  imports: [MatIconModule],
  template: `
    <h1 class="lg-page-title">{{ section().label }}</h1>
    <p class="lg-page-lead">{{ section().summary }}</p>
    <div class="placeholder" role="status" data-testid="coming-soon">
      <mat-icon>construction</mat-icon>
      <div>
        <strong>Coming: this section is not built yet.</strong>
        <p>Nothing here reads or changes data. It appears in a later release of Ligandry.</p>
      </div>
    </div>
  `,
  styles: `
    .placeholder {
      display: flex;
      gap: 14px;
      align-items: flex-start;
      max-width: 640px;
      padding: 18px 20px;
      border: 1px dashed var(--mat-sys-outline);
      border-radius: 12px;
      background: var(--mat-sys-surface-container);
    }
    .placeholder p {
      margin: 4px 0 0;
      color: var(--mat-sys-on-surface-variant);
    }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ComingSoon {
  readonly section = input.required<NavItem>();
}
