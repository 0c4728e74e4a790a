import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';

import type { RecheckState } from '../library/library-types';

const LOOK: Record<RecheckState, { readonly label: string; readonly icon: string }> = {
  draft: { label: 'Draft', icon: 'edit_note' },
  'awaiting-recheck': { label: 'Awaiting recheck', icon: 'hourglass_top' },
  confirmed: { label: 'Confirmed', icon: 'verified' },
  disputed: { label: 'Disputed', icon: 'report' },
};

/** A revision's recheck state as a small labelled chip; the words carry the meaning, colour only helps. */
@Component({
  selector: 'qp-recheck-chip',
  imports: [MatIconModule],
  template: `<span class="chip" [class]="'chip state-' + state()"
    ><mat-icon aria-hidden="true">{{ look().icon }}</mat-icon>{{ look().label }}</span
  >`,
  styles: `
    .chip {
      display: inline-flex;
      align-items: center;
      gap: 4px;
      padding: 2px 10px 2px 6px;
      border-radius: 999px;
      font: var(--mat-sys-label-medium);
      white-space: nowrap;
      border: 1px solid var(--mat-sys-outline-variant);
      background: var(--mat-sys-surface-container-high);
      color: var(--mat-sys-on-surface);
    }
    mat-icon { font-size: 16px; width: 16px; height: 16px; }
    .state-awaiting-recheck { background: var(--mat-sys-tertiary-container); color: var(--mat-sys-on-tertiary-container); }
    .state-confirmed { background: var(--mat-sys-primary-container); color: var(--mat-sys-on-primary-container); }
    .state-disputed { background: var(--mat-sys-error-container); color: var(--mat-sys-on-error-container); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RecheckChip {
  readonly state = input.required<RecheckState>();
  protected readonly look = computed(() => LOOK[this.state()]);
}
