import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';

import type { OverlayResult } from '../../../../shared/engine/trace-drive';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { Plot, type PlotCsv, type PlotSpec } from '../../ui/plot/plot';
import { CaseWorkspace } from '../case/case-workspace';
import { formatIn, formatNumber, formatPercent } from '../../core/units/format-number';
import { PoolJob } from '../case/pool-job';
import type { BenchTrace } from '../library/library-types';
import { MAX_PLOTTED_POINTS } from './plot-thinning';

interface Row {
  name: string;
  value: string;
}

const DEG = Math.PI / 180;

/**
 * A driven bench trace against the case: the drive read from the pivot column, the case simulated with it from
 * the trace's first state, measured and simulated angle and slow motion, and where each lost hold against the
 * Floquet limit.
 */
@Component({
  selector: 'qp-bench-overlay',
  imports: [MatButtonModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule, Plot],
  templateUrl: './bench-overlay.html',
  styleUrl: './bench-tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BenchOverlay {
  private readonly pool = inject(ENGINE_POOL);
  private readonly workspace = inject(CaseWorkspace);

  readonly trace = input.required<BenchTrace>();

  /** degrees, as the user types them */
  protected readonly partAngle = signal(5);
  protected readonly holdLimit = signal(30);
  protected readonly inputProblem = computed(() => {
    if (!(this.partAngle() > 0 && this.partAngle() <= 180)) return 'The parting angle must be above 0° and at most 180°.';
    if (!(this.holdLimit() > 0 && this.holdLimit() <= 180)) return 'The hold limit must be above 0° and at most 180°.';
    return null;
  });
  protected readonly job = new PoolJob<OverlayResult>();
  protected readonly result = signal<{ traceId: string; overlay: OverlayResult } | null>(null);
  protected readonly overlay = computed(() => {
    const r = this.result();
    return r && r.traceId === this.trace().id ? r.overlay : null;
  });

  protected readonly driveRows = computed<Row[]>(() => {
    const o = this.overlay();
    if (!o) return [];
    const units = this.workspace.units();
    const d = o.drive;
    const rows: Row[] = [
      { name: 'Drive amplitude', value: formatIn(d.amplitude, 'length', units) },
      { name: 'Drive frequency at the start', value: formatIn(d.frequency, 'frequency', units, 6) },
    ];
    if (d.rampRate !== 0) rows.push({ name: 'Frequency change', value: `${formatNumber(d.rampRate, 4)} Hz/s` });
    rows.push({ name: 'Second harmonic', value: formatIn(d.secondAmplitude, 'length', units) });
    rows.push({ name: 'RMS difference, measured − simulated', value: formatIn(o.rmsDifference, 'angle', units, 3) });
    rows.push({
      name: `Curves part by more than ${formatIn(o.partAngle, 'angle', units, 3)}`,
      value: o.partTime === null ? 'never' : `at ${formatNumber(o.partTime, 4)} s`,
    });
    return rows;
  });

  protected readonly lossRows = computed<Row[]>(() => {
    const o = this.overlay();
    if (!o) return [];
    const units = this.workspace.units();
    const loss = o.lossOfHold;
    const at = (l: { time: number; frequency: number } | null): string =>
      l === null ? 'holds to the end' : `${formatNumber(l.time, 4)} s at ${formatIn(l.frequency, 'frequency', units, 5)}`;
    return [
      { name: 'Measured', value: at(loss.measured) },
      { name: 'Model, nonlinear run', value: at(loss.simulated) },
      { name: 'Floquet lower limit', value: formatIn(loss.floquetLower, 'frequency', units, 5) },
      { name: 'Floquet upper limit', value: loss.floquetUpper === null ? 'none found' : formatIn(loss.floquetUpper, 'frequency', units, 5) },
      {
        name: 'Measured − Floquet limit',
        value: loss.differenceHz === null ? '—' : `${formatNumber(loss.differenceHz, 4)} Hz (${formatPercent(loss.differencePercent)})`,
      },
    ];
  });

  protected readonly plotData = computed<PlotSpec[]>(() => {
    const o = this.overlay();
    if (!o) return [];
    const stride = Math.max(1, Math.ceil(o.time.length / MAX_PLOTTED_POINTS));
    const pick = (values: Float64Array): number[] => Array.from(values.filter((_, i) => i % stride === 0));
    const deg = (values: Float64Array): number[] => pick(values).map((v) => v / DEG);
    const time = pick(o.time);
    const slowTime = Array.from(o.slowTime);
    const data: PlotSpec[] = [
      { x: time, y: deg(o.measured), type: 'scatter', mode: 'lines', name: 'measured', line: { width: 1 } },
      { x: time, y: deg(o.simulated), type: 'scatter', mode: 'lines', name: 'simulated', line: { width: 1, dash: 'dot' } },
      { x: slowTime, y: Array.from(o.slowMeasured, (v) => v / DEG), type: 'scatter', mode: 'lines', name: 'measured slow motion', line: { width: 2.5 } },
      { x: slowTime, y: Array.from(o.slowSimulated, (v) => v / DEG), type: 'scatter', mode: 'lines', name: 'simulated slow motion', line: { width: 2.5, dash: 'dash' } },
    ];
    return data;
  });
  protected readonly plotLayout = computed<PlotSpec>(() => {
    const o = this.overlay();
    const shapes: PlotSpec[] = [];
    const mark = (t: number | undefined, color: string): void => {
      if (t !== undefined) shapes.push({ type: 'line', x0: t, x1: t, yref: 'paper', y0: 0, y1: 1, line: { color, dash: 'dot', width: 1.5 } });
    };
    mark(o?.lossOfHold.measured?.time, '#c0392b');
    mark(o?.lossOfHold.simulated?.time, '#3b6fb6');
    return {
      xaxis: { title: { text: 'time (s)' } },
      yaxis: { title: { text: 'angle from upright (°)' } },
      legend: { orientation: 'h' },
      margin: { t: 24, r: 16, b: 48, l: 64 },
      shapes,
    };
  });
  protected readonly plotCsv = computed<PlotCsv | null>(() => {
    const o = this.overlay();
    if (!o) return null;
    return {
      columns: [{ header: 'time', unit: 's' }, { header: 'measured', unit: 'deg' }, { header: 'simulated', unit: 'deg' }],
      rows: Array.from(o.time, (t, i) => [t, o.measured[i] / DEG, o.simulated[i] / DEG]),
    };
  });

  protected runOverlay(): void {
    if (this.inputProblem()) return;
    const trace = this.trace();
    if (!trace.pivot) return;
    this.job.start(
      this.pool.overlay({
        params: this.workspace.draft(),
        trace: { time: trace.time, angle: trace.angle, pivot: trace.pivot },
        partAngle: this.partAngle() * DEG,
        holdLimit: this.holdLimit() * DEG,
      }),
      (overlay) => this.result.set({ traceId: trace.id, overlay }),
    );
  }
}
