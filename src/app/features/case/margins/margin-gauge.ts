import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';

import { formatPercent } from '../../../core/units/format-number';

/** How a margin reads at a glance. */
export type MarginLevel = 'comfortable' | 'thin' | 'outside' | 'unknown';

/** Margins of at least this many percent read as comfortable. */
export const COMFORTABLE_MARGIN_PERCENT = 20;

export function marginLevel(marginPercent: number | null): MarginLevel {
  if (marginPercent === null || !Number.isFinite(marginPercent)) return 'unknown';
  if (marginPercent < 0) return 'outside';
  return marginPercent >= COMFORTABLE_MARGIN_PERCENT ? 'comfortable' : 'thin';
}

const LEVEL_WORDS: Record<MarginLevel, string> = {
  comfortable: 'comfortable margin',
  thin: 'thin margin',
  outside: 'outside the holding band',
  unknown: 'no drive limit found',
};

const LEVEL_COLORS: Record<MarginLevel, string> = {
  comfortable: '#1b7f5b',
  thin: '#b7791f',
  outside: '#c0392b',
  unknown: '#6b7280',
};

/**
 * Where the case sits on the gauge's band, 0 % at the lower limit and 100 % at the upper. A limit the scan did not meet
 * is replaced by the scan's end, so the marker still shows where the case sits in what was searched; null when
 * neither limit was found.
 */
export function bandPosition(limits: {
  value: number;
  lower: number | null;
  upper: number | null;
  scanned: readonly [number, number];
}): number | null {
  const { value, lower, upper, scanned } = limits;
  if (lower === null && upper === null) return null;
  const lo = lower ?? scanned[0];
  const hi = upper ?? scanned[1];
  return hi > lo ? (100 * (value - lo)) / (hi - lo) : null;
}

/**
 * The upright's margin in one glance: the signed smallest change of the drive that reaches a limit, in percent, its
 * level in words and colour, and where the case sits between the lower and upper limits.
 */
@Component({
  selector: 'qp-margin-gauge',
  template: `
    <section class="gauge" [attr.aria-label]="'Margin ' + percentText() + ', ' + words()">
      <p class="value" [style.color]="color()" data-testid="margin-value">{{ percentText() }}</p>
      <p class="words" [style.color]="color()" data-testid="margin-words">{{ words() }}</p>
      <div class="track" aria-hidden="true">
        <div class="band"></div>
        @if (marker() !== null) {
          <div class="marker" [style.left.%]="marker()" [style.background]="color()"></div>
        }
      </div>
      <div class="ends">
        <span>lower limit {{ lowerLabel() }}</span>
        <span>upper limit {{ upperLabel() }}</span>
      </div>
      <p class="caption">{{ caption() }}</p>
    </section>
  `,
  styles: `
    .gauge { padding: 8px 0; }
    .value { margin: 0; font: var(--mat-sys-display-small); font-variant-numeric: tabular-nums; }
    .words { margin: 0 0 12px; font: var(--mat-sys-title-medium); }
    .track { position: relative; height: 16px; border-radius: 8px; background: var(--mat-sys-error-container); overflow: visible; }
    .band { position: absolute; left: 10%; right: 10%; top: 0; bottom: 0; background: var(--mat-sys-primary-container); }
    .marker { position: absolute; top: -4px; width: 6px; height: 24px; margin-left: -3px; border-radius: 3px; }
    .ends { display: flex; justify-content: space-between; gap: 8px; margin-top: 6px; padding: 0 6%; font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
    .caption { font: var(--mat-sys-body-small); color: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MarginGauge {
  /** Signed margin, percent (positive inside the holding band); null when no limit was found. */
  readonly marginPercent = input.required<number | null>();
  /** Position in the band, 0 at the lower limit and 100 at the upper; null if a limit is missing. */
  readonly positionPercent = input<number | null>(null);
  readonly lowerLabel = input('—');
  readonly upperLabel = input('—');
  readonly caption = input('');

  protected readonly level = computed(() => marginLevel(this.marginPercent()));
  protected readonly words = computed(() => LEVEL_WORDS[this.level()]);
  protected readonly color = computed(() => LEVEL_COLORS[this.level()]);
  protected readonly percentText = computed(() => formatPercent(this.marginPercent()));
  /** Marker position on the track: the band spans 10 % to 90 % of it; outside positions are clamped to the ends. */
  protected readonly marker = computed(() => {
    const p = this.positionPercent();
    if (p === null || !Number.isFinite(p)) return null;
    return Math.min(100, Math.max(0, 10 + 0.8 * p));
  });
}
