import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import type { ResultStatus } from './assay-api';
import { STATUS_LABELS } from './assay-labels';

/** A result's review status as a small coloured label, optionally with a count ("3 drafts"). */
@Component({
  selector: 'lg-status-chip',
  template: `{{ text() }}`,
  styles: `
    :host {
      display: inline-block;
      font: var(--mat-sys-label-medium);
      padding: 2px 10px;
      border-radius: 10px;
      white-space: nowrap;
      background: var(--mat-sys-surface-container-highest);
      color: var(--mat-sys-on-surface);
    }
    :host(.submitted) {
      background: var(--mat-sys-secondary-container);
      color: var(--mat-sys-on-secondary-container);
    }
    :host(.approved) {
      background: var(--mat-sys-primary-container);
      color: var(--mat-sys-on-primary-container);
    }
    :host(.rejected) {
      background: var(--mat-sys-error-container);
      color: var(--mat-sys-on-error-container);
    }
  `,
  host: { '[class]': 'status()' },
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StatusChip {
  readonly status = input.required<ResultStatus>();
  readonly count = input<number | null>(null);

  protected readonly text = computed(() => {
    const label = STATUS_LABELS[this.status()];
    const n = this.count();
    return n === null ? label : `${n} ${label.toLowerCase()}`;
  });
}
