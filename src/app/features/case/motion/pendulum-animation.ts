import { ChangeDetectionStrategy, Component, DestroyRef, computed, inject, input, signal } from '@angular/core';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatSelectModule } from '@angular/material/select';
import { MatSliderModule } from '@angular/material/slider';

import type { MotionSeries } from '../../../../../shared/engine/motion';
import { formatNumber } from '../../../core/units/format-number';

const BODY_PX = 90;

/**
 * The body (or every link of a chain) on its moving pivot, replayed in slowed time from the run's output grid: play, pause and scrub. The
 * pivot's stroke is enlarged when it is too small to see, and the enlargement is stated.
 */
@Component({
  selector: 'qp-pendulum-animation',
  imports: [FormsModule, MatButtonModule, MatIconModule, MatSelectModule, MatSliderModule],
  template: `
    <div class="animation">
      <svg viewBox="-120 -120 240 240" role="img" [attr.aria-label]="'Body at t = ' + timeLabel()">
        <line [attr.x1]="-track().x" [attr.y1]="-track().y" [attr.x2]="track().x" [attr.y2]="track().y" class="track" />
        @for (seg of frame().segments; track $index) {
          <line [attr.x1]="seg.x1" [attr.y1]="seg.y1" [attr.x2]="seg.x2" [attr.y2]="seg.y2" class="rod" />
          <circle [attr.cx]="seg.x2" [attr.cy]="seg.y2" [attr.r]="frame().segments.length > 1 ? 6 : 8" class="bob" />
        }
        <rect [attr.x]="frame().px - 8" [attr.y]="frame().py - 5" width="16" height="10" rx="2" class="pivot" />
        <text x="-115" y="112" class="label">{{ note() }}</text>
      </svg>
      <div class="controls">
        <button matIconButton type="button" (click)="toggle()" [attr.aria-label]="playing() ? 'Pause' : 'Play'">
          <mat-icon>{{ playing() ? 'pause' : 'play_arrow' }}</mat-icon>
        </button>
        <mat-slider class="scrub" [min]="0" [max]="duration()" [step]="duration() / 1000" discrete [displayWith]="formatTime">
          <input matSliderThumb [ngModel]="time()" (ngModelChange)="scrub($event)" aria-label="Time" />
        </mat-slider>
        <mat-form-field subscriptSizing="dynamic" class="speed">
          <mat-label>Speed</mat-label>
          <mat-select [ngModel]="speed()" (ngModelChange)="speed.set($event)">
            <mat-option [value]="1">real time</mat-option>
            <mat-option [value]="0.1">1/10</mat-option>
            <mat-option [value]="0.02">1/50</mat-option>
            <mat-option [value]="0.005">1/200</mat-option>
          </mat-select>
        </mat-form-field>
      </div>
      <p class="time">t = {{ timeLabel() }} s</p>
    </div>
  `,
  styles: `
    svg { width: 100%; max-height: 300px; display: block; }
    .track { stroke: var(--mat-sys-outline-variant); stroke-width: 2; }
    .rod { stroke: var(--mat-sys-primary); stroke-width: 4; stroke-linecap: round; }
    .bob { fill: var(--mat-sys-primary); }
    .pivot { fill: var(--mat-sys-on-surface); }
    .label { font: 10px Roboto, sans-serif; fill: var(--mat-sys-on-surface-variant); }
    .controls { display: flex; align-items: center; gap: 8px; flex-wrap: wrap; }
    .scrub { flex: 1 1 160px; min-width: 120px; }
    .speed { width: 130px; }
    .time { margin: 0; font-variant-numeric: tabular-nums; color: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class PendulumAnimation {
  readonly series = input.required<MotionSeries>();
  /** rad from the vertical */
  readonly direction = input.required<number>();
  /** m: the body's drawn length (a chain's total) */
  readonly length = input.required<number>();
  /** A chain's links: each one's absolute angle series (on the series' grid) and hinge-to-hinge length, m. */
  readonly links = input<{ theta: readonly Float64Array[]; lengths: readonly number[] } | null>(null);

  protected readonly time = signal(0);
  protected readonly playing = signal(false);
  protected readonly speed = signal(0.02);
  private frameRequest = 0;
  private lastStamp = 0;

  protected readonly duration = computed(() => {
    const t = this.series().t;
    return t.length > 0 ? t[t.length - 1] : 0;
  });
  /** SVG units per metre of pivot travel: the body's scale, enlarged so the stroke spans at least 12 units. */
  private readonly pivotScale = computed(() => {
    const body = BODY_PX / this.length();
    let peak = 0;
    for (const s of this.series().pivotPosition) peak = Math.max(peak, Math.abs(s));
    return peak * body < 6 && peak > 0 ? 6 / peak : body;
  });
  protected readonly note = computed(() => {
    const factor = this.pivotScale() / (BODY_PX / this.length());
    return factor > 1.01 ? `pivot stroke drawn ×${formatNumber(factor, 2)}` : 'drawn to scale';
  });
  protected readonly track = computed(() => {
    let peak = 0;
    for (const s of this.series().pivotPosition) peak = Math.max(peak, Math.abs(s));
    const half = peak * this.pivotScale() + 10;
    const beta = this.direction();
    return { x: Math.sin(beta) * half, y: -Math.cos(beta) * half };
  });
  protected readonly frame = computed(() => {
    const s = this.series();
    const n = s.t.length;
    const i = n > 1 ? Math.min(n - 1, Math.max(0, Math.round((this.time() / this.duration()) * (n - 1)))) : 0;
    const beta = this.direction();
    const shift = (s.pivotPosition[i] ?? 0) * this.pivotScale();
    const px = Math.sin(beta) * shift;
    const py = -Math.cos(beta) * shift;
    const links = this.links();
    const parts = links
      ? links.lengths.map((l, k) => ({ theta: links.theta[k][i] ?? 0, px: (l / this.length()) * BODY_PX }))
      : [{ theta: s.theta[i] ?? 0, px: BODY_PX }];
    let x = px;
    let y = py;
    const segments = parts.map(({ theta, px: len }) => {
      const seg = { x1: x, y1: y, x2: x + Math.sin(theta) * len, y2: y - Math.cos(theta) * len };
      x = seg.x2;
      y = seg.y2;
      return seg;
    });
    return { px, py, segments };
  });
  protected readonly timeLabel = computed(() => this.time().toFixed(4));

  constructor() {
    inject(DestroyRef).onDestroy(() => cancelAnimationFrame(this.frameRequest));
  }

  protected readonly formatTime = (value: number): string => `${formatNumber(value, 3)} s`;

  protected toggle(): void {
    if (this.playing()) {
      this.playing.set(false);
      cancelAnimationFrame(this.frameRequest);
      return;
    }
    if (this.time() >= this.duration()) this.time.set(0);
    this.playing.set(true);
    this.lastStamp = performance.now();
    this.frameRequest = requestAnimationFrame((stamp) => this.step(stamp));
  }

  protected scrub(value: number): void {
    this.time.set(Math.min(this.duration(), Math.max(0, value)));
  }

  private step(stamp: number): void {
    if (!this.playing()) return;
    const dt = ((stamp - this.lastStamp) / 1000) * this.speed();
    this.lastStamp = stamp;
    const next = this.time() + dt;
    if (next >= this.duration()) {
      this.time.set(this.duration());
      this.playing.set(false);
      return;
    }
    this.time.set(next);
    this.frameRequest = requestAnimationFrame((s) => this.step(s));
  }
}
