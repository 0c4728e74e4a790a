import { HttpErrorResponse } from '@angular/common/http';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { catchError, forkJoin, map, of } from 'rxjs';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';

import type { StabilityChart } from '../../../../shared/engine/chart';
import type { FloquetAnalysis } from '../../../../shared/engine/floquet';
import type { MotionResult } from '../../../../shared/engine/motion';
import type { SweepResult } from '../../../../shared/engine/sweep';
import { describeError } from '../../core/error-message';
import { DEFAULT_UNITS } from '../../core/units/display-units';
import { formatIn, withUnit } from '../../core/units/format-number';
import { stabilityChartPlot } from '../case/map/stability-chart-plot';
import { MarginGauge, bandPosition } from '../case/margins/margin-gauge';
import { angleTimePlot, phasePortraitPlot } from '../case/motion/motion-plots';
import { sweepAxis, sweepResultPlot } from '../case/sweeps/sweep-plot';
import { Plot } from '../../ui/plot/plot';
import { OutcomeCard, type OutcomeView } from '../case/motion/outcome-card';
import { RigSchematic } from '../case/rig/rig-schematic';
import { linkReportUrl } from '../history/case-report-download';
import { flattenParams } from '../history/params-diff';
import { StoredRunsTable } from '../history/stored-runs-table';
import { CaseLinkApi } from './case-link-api';
import { RerunPanel } from '../recheck/rerun-panel';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';

/** Why a link cannot be opened, in the visitor's words. */
export function linkProblem(error: unknown): string {
  if (error instanceof HttpErrorResponse && error.status === 410) {
    return 'This case link has expired or was revoked. Ask the person who sent it for a new one.';
  }
  if (error instanceof HttpErrorResponse && error.status === 404) {
    return 'This case link does not exist. Check that you copied the whole address.';
  }
  return describeError(error);
}

/**
 * What someone outside the lab sees through a case link: one revision, read-only, with its stored runs, which they
 * can rerun in their own browser to see the same numbers. There is no way to save anything from here.
 */
@Component({
  selector: 'qp-visitor-page',
  imports: [
    ScrollRegion, DatePipe, MarginGauge, MatButtonModule, MatIconModule, MatProgressBarModule, OutcomeCard, Plot, RerunPanel, RigSchematic,
    StoredRunsTable,
  ],
  templateUrl: './visitor-page.html',
  styleUrl: './visitor-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class VisitorPage {
  private readonly api = inject(CaseLinkApi);

  /** Bound from the route. */
  readonly token = input.required<string>();

  protected readonly link = rxResource({ params: () => this.token(), stream: ({ params }) => this.api.openPublicLink(params) });
  protected readonly shared = computed(() => (this.link.hasValue() ? this.link.value() : null));
  protected readonly problem = computed(() => {
    const error = this.link.error();
    return error ? linkProblem(error.cause ?? error) : null;
  });
  protected readonly reportUrl = computed(() => linkReportUrl(this.token()));
  /** The rig's settings by name with their units; the case-file format version is bookkeeping, not a setting. */
  protected readonly params = computed(() =>
    flattenParams(this.shared()?.revision.rawParams ?? null)
      .filter((p) => p.path !== 'schemaVersion')
      .map((p) => ({ ...p, shown: withUnit(p.value, p.unit) })),
  );
  protected readonly units = DEFAULT_UNITS;

  /**
   * The latest stored motion, margins, sweep and chart runs' full results, as the server stored them (its own
   * rerun's); a missing one, or one the server has not settled yet, stays null.
   */
  protected readonly stored = rxResource({
    params: () => {
      const s = this.shared();
      if (!s) return undefined;
      const latest = (kind: string) => s.revision.runs.filter((r) => r.kind === kind && r.verification.state !== 'pending').at(-1)?.id ?? null;
      return { token: this.token(), motion: latest('motion'), margins: latest('margins'), sweep: latest('sweep'), chart: latest('chart') };
    },
    stream: ({ params }) => {
      const fetch = <T>(runId: string | null, kind: string) =>
        runId === null
          ? of(null)
          : this.api.linkRunResult(params.token, runId).pipe(
              map((r) => (r.kind === kind ? (r.value as T) : null)),
              catchError(() => of(null)),
            );
      return forkJoin({
        motion: fetch<MotionResult>(params.motion, 'motion'),
        margins: fetch<FloquetAnalysis>(params.margins, 'margins'),
        sweep: fetch<SweepResult>(params.sweep, 'sweep'),
        chart: fetch<StabilityChart>(params.chart, 'chart'),
      });
    },
  });
  private readonly motion = computed(() => (this.stored.hasValue() ? this.stored.value().motion : null));
  private readonly margins = computed(() => (this.stored.hasValue() ? this.stored.value().margins : null));
  private readonly sweep = computed(() => (this.stored.hasValue() ? this.stored.value().sweep : null));
  private readonly chart = computed(() => (this.stored.hasValue() ? this.stored.value().chart : null));

  /** The stored plots, drawn by the same builders as the case tabs. */
  protected readonly timePlot = computed(() => {
    const m = this.motion();
    return m ? angleTimePlot(m, this.units) : null;
  });
  protected readonly phasePlot = computed(() => {
    const m = this.motion();
    return m ? phasePortraitPlot(m, this.units) : null;
  });
  protected readonly sweepPlot = computed(() => {
    const s = this.sweep();
    const params = this.shared()?.revision.params;
    return s && params ? sweepResultPlot(s, sweepAxis(s, params, this.units), this.units) : null;
  });
  protected readonly chartPlot = computed(() => {
    const c = this.chart();
    return c ? stabilityChartPlot(c, this.units) : null;
  });
  protected readonly hasResults = computed(
    () => this.outcomeView() !== null || this.gauge() !== null || this.sweepPlot() !== null || this.chartPlot() !== null,
  );

  protected readonly outcomeView = computed<OutcomeView | null>(() => {
    const m = this.motion();
    if (!m) return null;
    const upright = this.margins()?.upright;
    return {
      outcome: m.outcome,
      numbers: m.outcomeNumbers,
      summary: m.summary,
      status: m.status,
      rhsEvaluations: m.rhsEvaluations,
      uprightMultiplier: this.margins() ? { kind: 'from-margins', value: upright && Number.isFinite(upright.maxMultiplier) ? upright.maxMultiplier : null } : undefined,
    };
  });

  /** As on the Margins tab: the gauge follows the drive parameter with the smaller margin. */
  protected readonly gauge = computed(() => {
    const r = this.margins();
    if (!r) return null;
    const a = r.amplitudeLimits;
    const f = r.frequencyLimits;
    const useFrequency = a.marginPercent === null || (f.marginPercent !== null && f.marginPercent < a.marginPercent);
    const l = useFrequency ? f : a;
    const dim = useFrequency ? 'frequency' : 'length';
    const u = this.units;
    return {
      margin: r.marginPercent,
      position: bandPosition(l),
      lower: l.lower === null ? `none down to ${formatIn(l.scanned[0], dim, u)}` : formatIn(l.lower, dim, u),
      upper: l.upper === null ? `none up to ${formatIn(l.scanned[1], dim, u)}` : formatIn(l.upper, dim, u),
      caption: `Smallest change of drive ${useFrequency ? 'frequency' : 'amplitude'} that loses the upright (Floquet, with damping).`,
      holds: r.uprightHolds,
    };
  });
}
