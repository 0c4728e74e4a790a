import { Directive, input } from '@angular/core';

/**
 * A box that scrolls sideways when its table is wider than the screen. It takes keyboard focus and names itself, so
 * keyboard users can scroll it too (WCAG 2.1.1; axe's `scrollable-region-focusable`).
 */
@Directive({
  selector: '[qpScrollRegion]',
  host: { tabindex: '0', role: 'region', '[attr.aria-label]': 'label()' },
})
export class ScrollRegion {
  /** What the region holds, read out by screen readers. */
  readonly label = input.required<string>({ alias: 'qpScrollRegion' });
}
