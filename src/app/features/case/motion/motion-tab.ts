import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';

import { bodyProperties } from '../../../../../shared/engine/body';
import { Plot, type PlotCsv, type PlotSpec } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { RunStrip } from '../run-strip';
import { toDisplay, unitLabelOf } from '../../../core/units/display-units';
import { OutcomeCard, uprightMultiplierFor, type OutcomeView } from './outcome-card';
import { PendulumAnimation } from './pendulum-animation';

function scaled(values: Float64Array, factor: number): number[] {
  return Array.from(values, (v) => v * factor);
}

/** The Motion tab: the full nonlinear motion of the draft case, computed in a worker, with its outcome and plots. */
@Component({
  selector: 'qp-motion-tab',
  imports: [Plot, OutcomeCard, PendulumAnimation, RunStrip],
  templateUrl: './motion-tab.html',
  styleUrl: '../tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class MotionTab {
  protected readonly workspace = inject(CaseWorkspace);
  protected readonly job = this.workspace.motionJob;
  protected readonly units = this.workspace.units;
  protected readonly result = this.workspace.motion;
  protected readonly stale = computed(() => this.workspace.isStale(this.result()));

  protected readonly outcomeView = computed<OutcomeView | null>(() => {
    const motion = this.result();
    if (!motion) return null;
    const r = motion.value;
    return {
      outcome: r.outcome,
      numbers: r.outcomeNumbers,
      summary: r.summary,
      status: r.status,
      rhsEvaluations: r.rhsEvaluations,
      uprightMultiplier: uprightMultiplierFor(motion, this.workspace.margins()),
    };
  });
  protected readonly bodyLength = computed(() => {
    const p = this.result()?.params;
    return p ? bodyProperties(p.body, p.gravity).equivalentLength : 1;
  });

  private readonly angle = computed(() => ({
    factor: toDisplay(1, 'angle', this.units()),
    unit: unitLabelOf('angle', this.units()),
    rateUnit: unitLabelOf('rate', this.units()),
  }));

  protected readonly timePlot = computed(() => {
    const r = this.result()?.value;
    if (!r) return null;
    const { factor, unit } = this.angle();
    const data: PlotSpec[] = [
      { type: 'scatter', mode: 'lines', name: 'angle θ', x: r.series.t, y: scaled(r.series.theta, factor), line: { width: 1, color: '#7a8fa6' } },
      { type: 'scatter', mode: 'lines', name: 'slow motion (period mean)', x: r.slow.t, y: scaled(r.slow.theta, factor), line: { width: 2.5, color: '#0b6e69' } },
    ];
    const layout: PlotSpec = {
      xaxis: { title: { text: 'time t (s)' } },
      yaxis: { title: { text: `angle from upright θ (${unit})` } },
    };
    const csv: PlotCsv = {
      columns: [{ header: 't', unit: 's' }, { header: 'theta', unit }, { header: 'rate', unit: this.angle().rateUnit }, { header: 'pivot position', unit: 'm' }],
      rows: Array.from(r.series.t, (t, i) => [t, r.series.theta[i] * factor, r.series.rate[i] * factor, r.series.pivotPosition[i]]),
    };
    return { data, layout, csv };
  });

  protected readonly phasePlot = computed(() => {
    const r = this.result()?.value;
    if (!r) return null;
    const { factor, unit, rateUnit } = this.angle();
    const data: PlotSpec[] = [
      { type: 'scatter', mode: 'lines', name: 'full motion', x: scaled(r.series.theta, factor), y: scaled(r.series.rate, factor), line: { width: 1, color: '#7a8fa6' } },
      { type: 'scatter', mode: 'lines', name: 'slow motion', x: scaled(r.slow.theta, factor), y: scaled(r.slow.rate, factor), line: { width: 2, color: '#0b6e69' } },
    ];
    const layout: PlotSpec = {
      xaxis: { title: { text: `angle θ (${unit})` } },
      yaxis: { title: { text: `rate θ̇ (${rateUnit})` } },
    };
    const csv: PlotCsv = {
      columns: [{ header: 't', unit: 's' }, { header: 'theta', unit }, { header: 'rate', unit: rateUnit }],
      rows: Array.from(r.series.t, (t, i) => [t, r.series.theta[i] * factor, r.series.rate[i] * factor]),
    };
    return { data, layout, csv };
  });

  protected readonly strobePlot = computed(() => {
    const r = this.result()?.value;
    if (!r) return null;
    const { factor, unit, rateUnit } = this.angle();
    const data: PlotSpec[] = [
      {
        type: 'scatter',
        mode: 'markers',
        name: 'once per drive period',
        x: scaled(r.strobe.theta, factor),
        y: scaled(r.strobe.rate, factor),
        marker: { size: 5, color: Array.from(r.strobe.t), colorscale: 'Viridis', colorbar: { title: { text: 't (s)' }, thickness: 10 } },
      },
    ];
    const layout: PlotSpec = {
      xaxis: { title: { text: `angle θ at the strobe phase (${unit})` } },
      yaxis: { title: { text: `rate θ̇ (${rateUnit})` } },
    };
    const csv: PlotCsv = {
      columns: [{ header: 't', unit: 's' }, { header: 'theta', unit }, { header: 'rate', unit: rateUnit }],
      rows: Array.from(r.strobe.t, (t, i) => [t, r.strobe.theta[i] * factor, r.strobe.rate[i] * factor]),
    };
    return { data, layout, csv };
  });

  protected run(): void {
    this.workspace.runMotion();
  }
}
