import { ChangeDetectionStrategy, Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { describe, expect, it } from 'vitest';
import { ScrollRegion } from './scroll-region';

@Component({
  selector: 'qp-scroll-host',
  imports: [ScrollRegion],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `<div class="scroll" qpScrollRegion="Stored runs"><table><tr><td>1</td></tr></table></div>`,
})
class ScrollHost {}

describe('ScrollRegion', () => {
  it('makes a sideways-scrolling box focusable and named for keyboard and screen-reader users', () => {
    const fixture = TestBed.createComponent(ScrollHost);
    fixture.detectChanges();
    const box = (fixture.nativeElement as HTMLElement).querySelector('div')!;
    expect(box.getAttribute('tabindex')).toBe('0');
    expect(box.getAttribute('role')).toBe('region');
    expect(box.getAttribute('aria-label')).toBe('Stored runs');
  });
});
