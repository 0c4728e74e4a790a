import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';

import { averagedAnalysis } from '../../../../../shared/engine/averaged';
import { MULTIPLIER_UNIT_TOLERANCE, type DriveLimits, type PeriodicMotion } from '../../../../../shared/engine/floquet';
import type { Complex } from '../../../../../shared/engine/monodromy';
import { Plot, type PlotCsv, type PlotSpec } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { RunStrip } from '../run-strip';
import { StoredMark } from '../stored-mark';
import { formatIn, formatNumber, formatPercent } from '../../../core/units/format-number';
import { toDisplay, unitLabelOf, type Dimension } from '../../../core/units/display-units';
import { MarginGauge, bandPosition } from './margin-gauge';
import { ScrollRegion } from '../../../ui/scroll-region/scroll-region';

interface NumberRow {
  readonly label: string;
  readonly value: string;
}

function complexText(z: Complex): string {
  const re = formatNumber(z.re, 5);
  if (Math.abs(z.im) < 1e-12) return re;
  return `${re} ${z.im < 0 ? '−' : '+'} ${formatNumber(Math.abs(z.im), 5)}i`;
}

/** The Margins tab: averaged (Kapitza) picture at once, Floquet multipliers and drive limits from a worker. */
@Component({
  selector: 'qp-margins-tab',
  imports: [ScrollRegion, Plot, MarginGauge, RunStrip, StoredMark],
  templateUrl: './margins-tab.html',
  styleUrl: '../tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MarginsTab {
  protected readonly workspace = inject(CaseWorkspace);
  protected readonly job = this.workspace.marginsJob;
  protected readonly units = this.workspace.units;
  protected readonly result = this.workspace.margins;
  protected readonly stale = computed(() => this.workspace.isStale(this.result()));

  protected readonly averaged = computed(() => averagedAnalysis(this.workspace.draft()));

  protected readonly potentialPlot = computed(() => {
    const a = this.averaged();
    const units = this.units();
    const f = toDisplay(1, 'angle', units);
    const unit = unitLabelOf('angle', units);
    const x = Array.from(a.potential.theta, (v) => v * f);
    const stable = a.equilibria.filter((e) => e.stable);
    const unstable = a.equilibria.filter((e) => !e.stable);
    const at = (theta: number) => {
      let best = 0;
      for (let i = 1; i < a.potential.theta.length; i++) {
        if (Math.abs(a.potential.theta[i] - theta) < Math.abs(a.potential.theta[best] - theta)) best = i;
      }
      return a.potential.value[best];
    };
    const data: PlotSpec[] = [
      { type: 'scatter', mode: 'lines', name: 'U_eff(θ)', x, y: Array.from(a.potential.value), line: { color: '#0b6e69', width: 2 } },
      {
        type: 'scatter', mode: 'markers', name: 'stable equilibrium',
        x: stable.map((e) => e.angle * f), y: stable.map((e) => at(e.angle)),
        marker: { size: 12, color: '#1b7f5b', symbol: 'circle' },
      },
      {
        type: 'scatter', mode: 'markers', name: 'unstable equilibrium',
        x: unstable.map((e) => e.angle * f), y: unstable.map((e) => at(e.angle)),
        marker: { size: 12, color: '#c0392b', symbol: 'circle-open', line: { width: 2 } },
      },
    ];
    const layout: PlotSpec = {
      xaxis: { title: { text: `angle from upright θ (${unit})` } },
      yaxis: { title: { text: 'effective potential U_eff / I (1/s²)' } },
    };
    const csv: PlotCsv = {
      columns: [{ header: 'theta', unit }, { header: 'U_eff', unit: '1/s^2' }],
      rows: x.map((v, i) => [v, a.potential.value[i]]),
    };
    return { data, layout, csv };
  });

  protected readonly averagedRows = computed<NumberRow[]>(() => {
    const a = this.averaged();
    const u = this.units();
    const rows: NumberRow[] = [
      { label: 'Equivalent length L', value: formatIn(a.equivalentLength, 'length', u) },
      { label: '⟨ṡ²⟩/(gL)', value: formatNumber(a.stiffnessRatio, 4) },
      { label: 'ω/ω₀ (theory wants ≫ 1)', value: formatNumber(a.frequencyRatio, 3) },
      { label: 'a/L (theory wants ≪ 1)', value: formatNumber(a.amplitudeRatio, 3) },
      { label: 'Upright (averaged)', value: a.uprightStable === null ? 'not an equilibrium (drive not vertical)' : a.uprightStable ? 'holds' : 'lost' },
      { label: 'Slow frequency about the upright', value: a.uprightSlowFrequency === null ? '—' : formatIn(a.uprightSlowFrequency / (2 * Math.PI), 'frequency', u) },
      { label: 'Lower amplitude limit (averaged)', value: formatIn(a.lowerAmplitude, 'length', u) },
      { label: 'Lower frequency limit (averaged)', value: formatIn(a.lowerFrequency, 'frequency', u) },
    ];
    if (a.tiltFromDown !== null) rows.push({ label: 'Tilt from hanging (averaged)', value: formatIn(a.tiltFromDown, 'angle', u) });
    for (const e of a.equilibria) {
      rows.push({
        label: `Equilibrium at ${formatIn(e.angle, 'angle', u)}`,
        value: e.stable ? `stable, slow ${formatIn(e.slowFrequencyHz, 'frequency', u)}` : 'unstable',
      });
    }
    return rows;
  });

  protected readonly limitsRows = computed<NumberRow[]>(() => {
    const r = this.result()?.value;
    if (!r) return [];
    const u = this.units();
    const limit = (l: DriveLimits, dim: Dimension): NumberRow[] => {
      const name = l.field === 'drive.amplitude' ? 'amplitude' : 'frequency';
      return [
        { label: `Lower ${name} limit`, value: formatIn(l.lower, dim, u, 6) },
        { label: `Upper ${name} limit`, value: l.upper === null ? `none up to ${formatIn(l.scanned[1], dim, u)}` : formatIn(l.upper, dim, u, 6) },
        { label: `Margin in ${name}`, value: formatPercent(l.marginPercent) },
      ];
    };
    const rows: NumberRow[] = [
      { label: 'Drive period T', value: `${formatNumber(r.period * 1000, 5)} ms` },
      ...limit(r.amplitudeLimits, 'length'),
      ...limit(r.frequencyLimits, 'frequency'),
    ];
    if (r.mathieu) {
      rows.push(
        { label: 'Mathieu A = −4g/(Lω²)', value: formatNumber(r.mathieu.A, 5) },
        { label: 'Mathieu q = 2a/L', value: formatNumber(r.mathieu.q, 5) },
        { label: 'Undamped band a₀(q) < A < b₁(q)', value: `${formatNumber(r.mathieu.a0, 5)} … ${formatNumber(r.mathieu.b1, 5)}` },
      );
    }
    return rows;
  });

  protected readonly motions = computed(() => {
    const r = this.result()?.value;
    if (!r) return [];
    const u = this.units();
    const list: PeriodicMotion[] = [];
    if (r.upright) list.push(r.upright);
    for (const m of r.periodicMotions) if (m !== r.upright) list.push(m);
    return list.map((m, i) => ({
      key: `${m.kind}-${i}`,
      kind: m.kind,
      angle: formatIn(m.meanAngle, 'angle', u),
      multipliers: m.multipliers.map(complexText).join(', '),
      largest: formatNumber(m.maxMultiplier, 6),
      stable: m.stable,
    }));
  });

  /** A chain's modes of the upright, the one that loses stability first at the top. */
  protected readonly modes = computed(() => {
    const modes = this.result()?.value.upright?.modes;
    if (!modes) return [];
    return modes.map((m, i) => ({
      key: i,
      multiplier: complexText(m.multiplier),
      modulus: formatNumber(m.modulus, 6),
      shape: m.shape.map((x) => formatNumber(x, 3)).join(' : '),
      kind:
        Math.abs(m.multiplier.im) > 1e-12 ? 'slow swing'
        : m.multiplier.re >= 0 ? 'slow drift, no swing'
        : 'flips every drive period (half the drive frequency)',
      verdict: m.modulus < 1 + MULTIPLIER_UNIT_TOLERANCE ? 'decays' : 'grows',
    }));
  });

  /** The gauge follows the drive parameter with the smaller margin. */
  protected readonly gauge = computed(() => {
    const r = this.result()?.value;
    if (!r) return null;
    const u = this.units();
    const a = r.amplitudeLimits;
    const f = r.frequencyLimits;
    const useFrequency = a.marginPercent === null || (f.marginPercent !== null && f.marginPercent < a.marginPercent);
    const l = useFrequency ? f : a;
    const dim: Dimension = useFrequency ? 'frequency' : 'length';
    return {
      margin: r.marginPercent,
      position: bandPosition(l),
      lower: l.lower === null ? `none down to ${formatIn(l.scanned[0], dim, u)}` : formatIn(l.lower, dim, u),
      upper: l.upper === null ? `none up to ${formatIn(l.scanned[1], dim, u)}` : formatIn(l.upper, dim, u),
      caption: `Smallest change of drive ${useFrequency ? 'frequency' : 'amplitude'} that loses the upright (Floquet, with damping). The marker shows where the case sits between the limits.`,
    };
  });

  protected run(): void {
    this.workspace.runMargins();
  }
}
