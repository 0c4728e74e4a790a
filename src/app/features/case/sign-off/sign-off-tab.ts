import { ChangeDetectionStrategy, Component } from '@angular/core';

import { LeanestPanel } from './leanest-panel';

/**
 * The Sign-off tab: what a rig designer checks before building. The leanest drive panel lives here; the hold
 * probability panel (sign-off-tab's other half, files hold-probability-*) goes beside it.
 */
@Component({
  selector: 'qp-sign-off-tab',
  imports: [LeanestPanel],
  template: `
    <!-- Hold probability panel: <qp-hold-probability-panel /> goes here (the other half of issue 14). -->
    <qp-leanest-panel />
  `,
  styleUrl: '../tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SignOffTab {}
