import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';

import type { FitModel, FitResult } from '../../../../shared/engine/fit';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { Plot, type PlotCsv, type PlotSpec } from '../../ui/plot/plot';
import { CaseWorkspace } from '../case/case-workspace';
import { formatIn, formatNumber } from '../../core/units/format-number';
import { PoolJob } from '../case/pool-job';
import type { Dimension } from '../../core/units/display-units';
import type { BenchTrace } from '../library/library-types';
import { applyFit } from '../../../../shared/engine/apply-fit';
import { MAX_PLOTTED_POINTS } from './plot-thinning';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';

interface EstimateRow {
  name: string;
  value: string;
  uncertainty: string;
}

const MODELS: ReadonlyArray<{ value: FitModel; label: string }> = [
  { value: 'viscous', label: 'viscous damping' },
  { value: 'viscous+quadratic', label: 'viscous and quadratic (air) damping' },
  { value: 'viscous+friction', label: 'viscous damping and pivot friction' },
];

/**
 * Free-swing fit of one bench trace in a worker: estimates with standard uncertainties, measured against fitted
 * swing and the residual, and "Apply to the rig", which writes the fitted body and damping into the Rig form.
 */
@Component({
  selector: 'qp-bench-fit',
  imports: [ScrollRegion, MatButtonModule, MatFormFieldModule, MatIconModule, MatProgressBarModule, MatSelectModule, Plot],
  templateUrl: './bench-fit.html',
  styleUrl: './bench-tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class BenchFit {
  private readonly pool = inject(ENGINE_POOL);
  private readonly workspace = inject(CaseWorkspace);
  private readonly snackBar = inject(MatSnackBar);

  readonly trace = input.required<BenchTrace>();

  protected readonly models = MODELS;
  protected readonly model = signal<FitModel>('viscous');
  protected readonly job = new PoolJob<FitResult>();
  protected readonly result = signal<{ traceId: string; fit: FitResult } | null>(null);
  protected readonly fit = computed(() => {
    const r = this.result();
    return r && r.traceId === this.trace().id ? r.fit : null;
  });
  protected readonly canApply = computed(() => this.fit() !== null && !this.workspace.readOnly());

  protected readonly rows = computed<EstimateRow[]>(() => {
    const fit = this.fit();
    if (!fit) return [];
    const units = this.workspace.units();
    const row = (name: string, si: number | undefined, sigma: number | undefined, dimension: Dimension, unit = ''): EstimateRow | null => {
      if (si === undefined) return null;
      // estimates to 5 significant digits, uncertainties to 2
      const show = (v: number | undefined, digits: number): string =>
        v === undefined || Number.isNaN(v) ? '—' : dimension === 'plain' ? `${formatNumber(v, digits)}${unit ? ` ${unit}` : ''}` : formatIn(v, dimension, units, digits);
      return { name, value: show(si, 5), uncertainty: show(sigma, 2) };
    };
    const f = fit.fitted;
    const u = fit.uncertainty;
    return [
      row('Equivalent length', f.equivalentLength, u.equivalentLength, 'length'),
      row('Small swing frequency', fit.swingFrequency, fit.swingFrequencyUncertainty, 'frequency'),
      row('Damping ratio ζ', f.viscousRatio, u.viscousRatio, 'plain'),
      row('Quadratic coefficient', f.quadratic, u.quadratic, 'plain', '1/rad'),
      row('Pivot friction', f.friction, u.friction, 'plain', 'rad/s²'),
      row('Sensor reading at rest', f.offset, u.offset, 'angle'),
      row('Start angle from upright', f.startAngle, u.startAngle, 'angle'),
      row('Start rate', f.startRate, u.startRate, 'rate'),
    ].filter((r): r is EstimateRow => r !== null);
  });
  protected readonly modelLabel = computed(() => MODELS.find((m) => m.value === this.fit()?.model)?.label ?? '');
  protected readonly rmsText = computed(() => {
    const fit = this.fit();
    return fit ? formatIn(fit.rmsResidual, 'angle', this.workspace.units(), 3) : '';
  });

  private readonly thinned = computed(() => {
    const fit = this.fit();
    if (!fit) return null;
    const stride = Math.max(1, Math.ceil(fit.time.length / MAX_PLOTTED_POINTS));
    const pick = (values: Float64Array): number[] => Array.from(values.filter((_, i) => i % stride === 0));
    const deg = (values: number[]): number[] => values.map((v) => (v * 180) / Math.PI);
    const fitted = pick(fit.fittedAngle);
    const residual = pick(fit.residual);
    return { time: pick(fit.time), measured: deg(fitted.map((v, i) => v + residual[i])), fitted: deg(fitted), residual: deg(residual) };
  });
  protected readonly swingPlot = computed<PlotSpec[]>(() => {
    const t = this.thinned();
    if (!t) return [];
    return [
      { x: t.time, y: t.measured, type: 'scatter', mode: 'lines', name: 'measured (°)', line: { width: 1 } },
      { x: t.time, y: t.fitted, type: 'scatter', mode: 'lines', name: 'fitted (°)', line: { width: 1, dash: 'dot' } },
    ];
  });
  protected readonly residualPlot = computed<PlotSpec[]>(() => {
    const t = this.thinned();
    if (!t) return [];
    return [{ x: t.time, y: t.residual, type: 'scatter', mode: 'lines', name: 'residual (°)', line: { width: 1 } }];
  });
  protected readonly swingLayout: PlotSpec = {
    xaxis: { title: { text: 'time (s)' } },
    yaxis: { title: { text: 'sensor reading (°)' } },
    legend: { orientation: 'h' },
    margin: { t: 24, r: 16, b: 48, l: 64 },
  };
  protected readonly residualLayout: PlotSpec = {
    xaxis: { title: { text: 'time (s)' } },
    yaxis: { title: { text: 'measured − fitted (°)' } },
    margin: { t: 24, r: 16, b: 48, l: 64 },
  };
  protected readonly residualCsv = computed<PlotCsv | null>(() => {
    const fit = this.fit();
    if (!fit) return null;
    return {
      columns: [{ header: 'time', unit: 's' }, { header: 'measured', unit: 'deg' }, { header: 'fitted', unit: 'deg' }, { header: 'residual', unit: 'deg' }],
      rows: Array.from(fit.time, (t, i) => {
        const fitted = (fit.fittedAngle[i] * 180) / Math.PI;
        const residual = (fit.residual[i] * 180) / Math.PI;
        return [t, fitted + residual, fitted, residual];
      }),
    };
  });

  protected runFit(): void {
    const trace = this.trace();
    const params = this.workspace.draft();
    this.job.start(
      this.pool.fit({
        trace: { time: trace.time, angle: trace.angle },
        model: this.model(),
        gravity: params.gravity,
        frictionSmoothing: params.damping.frictionSmoothing,
      }),
      (fit) => this.result.set({ traceId: trace.id, fit }),
    );
  }

  protected applyToRig(): void {
    const fit = this.fit();
    if (!fit) return;
    const trace = this.trace();
    const applied = applyFit(this.workspace.draft(), fit, trace.label || trace.fileName);
    if (!applied) {
      this.snackBar.open('A chain is not changed by a fit: one swing trace cannot size several links.', 'OK', { duration: 6000 });
      return;
    }
    this.workspace.applyParamsWithNote(applied.params, applied.note);
    this.snackBar.open(`Applied to the rig: ${applied.changes}. Save to keep them as a new revision.`, 'OK', { duration: 6000 });
  }
}
