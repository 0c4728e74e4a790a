import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';

import { bodyProperties } from '../../../../../shared/engine/body';
import { chainLinkLength } from '../../../../../shared/case/display';
import { Plot } from '../../../ui/plot/plot';
import { CaseWorkspace } from '../case-workspace';
import { RunStrip } from '../run-strip';
import { StoredMark } from '../stored-mark';
import { OutcomeCard, uprightMultiplierFor, type OutcomeView } from './outcome-card';
import { angleTimePlot, phasePortraitPlot, strobePlot as strobePlotOf } from './motion-plots';
import { PendulumAnimation } from './pendulum-animation';

/** The Motion tab: the full nonlinear motion of the draft case, computed in a worker, with its outcome and plots. */
@Component({
  selector: 'qp-motion-tab',
  imports: [Plot, OutcomeCard, PendulumAnimation, RunStrip, StoredMark],
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
    if (p?.body.kind === 'chain') return p.body.links.reduce((sum, link) => sum + chainLinkLength(link), 0);
    return p ? bodyProperties(p.body, p.gravity).equivalentLength : 1;
  });
  /** A chain's links for the animation: angle series and lengths. */
  protected readonly chainLinks = computed(() => {
    const r = this.result();
    if (!r || r.params.body.kind !== 'chain' || !r.value.chain) return null;
    return { theta: r.value.chain.theta, lengths: r.params.body.links.map(chainLinkLength) };
  });

  protected readonly timePlot = computed(() => {
    const r = this.result()?.value;
    return r ? angleTimePlot(r, this.units()) : null;
  });
  protected readonly phasePlot = computed(() => {
    const r = this.result()?.value;
    return r ? phasePortraitPlot(r, this.units()) : null;
  });
  protected readonly strobePlot = computed(() => {
    const r = this.result()?.value;
    return r ? strobePlotOf(r, this.units()) : null;
  });

  protected run(): void {
    this.workspace.runMotion();
  }
}
