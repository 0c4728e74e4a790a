import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';

import type { CaseParams } from '../../../../../shared/case/case-schema';
import { chainLinkLength } from '../../../../../shared/case/display';
import { bodyProperties } from '../../../../../shared/engine/body';
import { chainStart } from '../../../../../shared/engine/chain';
import { formatIn } from '../../../core/units/format-number';
import type { DisplayUnits } from '../../../core/units/display-units';

/** Drawn length of the body, in SVG units. */
const BODY_PX = 100;

/**
 * A schematic of the rig as entered: the body at its start angle from the upright (clockwise positive), the pivot,
 * the drive line at its direction from the vertical with the stroke, and the crank when there is one. Lengths of the
 * body are to scale with each other; the stroke is enlarged when it would be too small to see.
 */
@Component({
  selector: 'qp-rig-schematic',
  template: `
    <svg viewBox="-130 -140 260 250" role="img" [attr.aria-label]="description()">
      <line x1="0" y1="0" x2="0" y2="-125" class="reference" />
      <line [attr.x1]="-driveLine().x" [attr.y1]="-driveLine().y" [attr.x2]="driveLine().x" [attr.y2]="driveLine().y" class="drive-line" />
      <line [attr.x1]="-stroke().x" [attr.y1]="-stroke().y" [attr.x2]="stroke().x" [attr.y2]="stroke().y" class="stroke" marker-start="url(#qp-arrow)" marker-end="url(#qp-arrow)" />
      @if (crank(); as c) {
        <circle [attr.cx]="c.cx" [attr.cy]="c.cy" [attr.r]="c.r" class="crank" />
        <line [attr.x1]="c.cx" [attr.y1]="c.cy - c.r" x2="0" y2="0" class="conrod" />
      }
      @switch (shape().kind) {
        @case ('chain') {
          @for (link of chainLinks(); track $index) {
            <line [attr.x1]="link.x1" [attr.y1]="link.y1" [attr.x2]="link.x2" [attr.y2]="link.y2" [attr.class]="link.rod ? 'rod' : 'thin-rod'" />
            @if (link.bobR > 0) {
              <circle [attr.cx]="link.bobX" [attr.cy]="link.bobY" [attr.r]="link.bobR" class="mass" />
            }
            @if ($index > 0) {
              <circle [attr.cx]="link.x1" [attr.cy]="link.y1" r="4" class="hinge" />
            }
          }
        }
        @case ('rod-bob') {
          <line x1="0" y1="0" [attr.x2]="shape().rodX" [attr.y2]="shape().rodY" class="rod" />
          <circle [attr.cx]="shape().bobX" [attr.cy]="shape().bobY" [attr.r]="shape().bobR" class="mass" />
        }
        @case ('point-mass') {
          <line x1="0" y1="0" [attr.x2]="shape().rodX" [attr.y2]="shape().rodY" class="thin-rod" />
          <circle [attr.cx]="shape().rodX" [attr.cy]="shape().rodY" r="8" class="mass" />
        }
        @default {
          <line x1="0" y1="0" [attr.x2]="shape().rodX" [attr.y2]="shape().rodY" class="equivalent" />
          <circle [attr.cx]="shape().rodX" [attr.cy]="shape().rodY" r="6" class="mass" />
        }
      }
      <rect x="-9" y="-5" width="18" height="10" rx="2" class="pivot" />
      <text x="-125" y="100" class="label">{{ lengthLabel() }}</text>
      <text x="-125" y="-125" class="label">{{ angleLabel() }}</text>
      <text [attr.x]="strokeLabelX()" y="100" class="label" text-anchor="end">{{ strokeLabel() }}</text>
      <defs>
        <marker id="qp-arrow" viewBox="0 0 10 10" refX="5" refY="5" markerWidth="3" markerHeight="3" orient="auto-start-reverse">
          <path d="M 0 0 L 10 5 L 0 10 z" class="arrow-head" />
        </marker>
      </defs>
    </svg>
  `,
  styles: `
    :host { display: block; }
    svg { width: 100%; max-height: 280px; }
    .reference { stroke: var(--mat-sys-outline-variant); stroke-dasharray: 4 4; }
    .drive-line { stroke: var(--mat-sys-outline); stroke-width: 1; }
    .stroke { stroke: var(--mat-sys-tertiary); stroke-width: 3; }
    .arrow-head { fill: var(--mat-sys-tertiary); }
    .rod { stroke: var(--mat-sys-primary); stroke-width: 6; stroke-linecap: round; }
    .thin-rod { stroke: var(--mat-sys-primary); stroke-width: 2; }
    .equivalent { stroke: var(--mat-sys-primary); stroke-width: 3; stroke-dasharray: 8 4; }
    .mass { fill: var(--mat-sys-primary); }
    .pivot { fill: var(--mat-sys-on-surface); }
    .hinge { fill: var(--mat-sys-surface); stroke: var(--mat-sys-on-surface); stroke-width: 1.5; }
    .crank { fill: none; stroke: var(--mat-sys-secondary); stroke-width: 2; }
    .conrod { stroke: var(--mat-sys-secondary); stroke-width: 2; }
    .label { font: 11px Roboto, sans-serif; fill: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RigSchematic {
  readonly params = input.required<CaseParams>();
  readonly units = input.required<DisplayUnits>();

  private readonly bodyLength = computed(() => {
    const p = this.params();
    const b = p.body;
    if (b.kind === 'point-mass') return b.length;
    if (b.kind === 'rod-bob') return Math.max(b.rodLength, b.bobDistance + b.bobRadius);
    if (b.kind === 'chain') return b.links.reduce((sum, link) => sum + chainLinkLength(link), 0);
    return bodyProperties(b, p.gravity).equivalentLength;
  });
  /** A chain's links at their start angles, each from the previous link's outer hinge. */
  protected readonly chainLinks = computed(() => {
    const p = this.params();
    if (p.body.kind !== 'chain') return [];
    const s = this.scale();
    const angles = chainStart(p);
    let x = 0;
    let y = 0;
    return p.body.links.map((link, i) => {
      const ex = Math.sin(angles[i]);
      const ey = -Math.cos(angles[i]);
      const len = chainLinkLength(link) * s;
      const bob = link.kind === 'point-mass' ? { d: len, r: 6 } : { d: link.bobDistance * s, r: link.bobMass > 0 ? Math.max(3, link.bobRadius * s) : 0 };
      const drawn = { x1: x, y1: y, x2: x + ex * len, y2: y + ey * len, rod: link.kind === 'rod-bob', bobX: x + ex * bob.d, bobY: y + ey * bob.d, bobR: bob.r };
      x = drawn.x2;
      y = drawn.y2;
      return drawn;
    });
  });
  private readonly scale = computed(() => BODY_PX / this.bodyLength());
  /** Unit vector of the body from the pivot (screen y points down). */
  private readonly axis = computed(() => {
    const theta = this.params().start.angle;
    return { x: Math.sin(theta), y: -Math.cos(theta) };
  });
  /** Unit vector of the drive line. */
  private readonly driveAxis = computed(() => {
    const beta = this.params().drive.direction;
    return { x: Math.sin(beta), y: -Math.cos(beta) };
  });

  protected readonly shape = computed(() => {
    const b = this.params().body;
    const s = this.scale();
    const { x, y } = this.axis();
    if (b.kind === 'rod-bob') {
      return {
        kind: b.kind,
        rodX: x * b.rodLength * s,
        rodY: y * b.rodLength * s,
        bobX: x * b.bobDistance * s,
        bobY: y * b.bobDistance * s,
        bobR: b.bobMass > 0 ? Math.max(3, b.bobRadius * s) : 0,
      };
    }
    return { kind: b.kind, rodX: x * BODY_PX, rodY: y * BODY_PX, bobX: 0, bobY: 0, bobR: 0 };
  });

  protected readonly driveLine = computed(() => ({ x: this.driveAxis().x * 120, y: this.driveAxis().y * 120 }));

  /** Half the stroke, drawn at least 18 units long so it stays visible. */
  protected readonly stroke = computed(() => {
    const half = Math.min(60, Math.max(18, this.params().drive.amplitude * this.scale()));
    return { x: this.driveAxis().x * half, y: this.driveAxis().y * half };
  });

  protected readonly crank = computed(() => {
    const d = this.params().drive;
    if (d.waveform.kind !== 'crank-slider') return null;
    const s = this.scale();
    const r = Math.min(30, Math.max(4, d.amplitude * s));
    const rod = Math.min(90, Math.max(r + 10, d.waveform.connectingRod * s));
    const a = this.driveAxis();
    return { cx: -a.x * rod, cy: -a.y * rod, r };
  });

  protected readonly lengthLabel = computed(() => {
    const b = this.params().body;
    const label = b.kind === 'measured-swing' ? 'L (equivalent)' : b.kind === 'rod-bob' ? 'rod' : b.kind === 'chain' ? `${b.links.length} links, total` : 'L';
    return `${label} = ${formatIn(this.bodyLength(), 'length', this.units(), 3)}`;
  });
  protected readonly angleLabel = computed(() => `start ${formatIn(this.params().start.angle, 'angle', this.units(), 3)} from upright`);
  protected readonly strokeLabel = computed(
    () => `drive ±${formatIn(this.params().drive.amplitude, 'length', this.units(), 3)} at ${formatIn(this.params().drive.direction, 'angle', this.units(), 3)}`,
  );
  protected readonly strokeLabelX = computed(() => 125);
  protected readonly description = computed(
    () => `Schematic: ${this.lengthLabel()}, ${this.angleLabel()}, ${this.strokeLabel()} from the vertical`,
  );
}
