import { ChangeDetectionStrategy, Component } from '@angular/core';

import { CautionPanel } from '../rig/caution-panel';
import { HoldProbabilityPanel } from './hold-probability-panel';
import { LeanestPanel } from './leanest-panel';

/**
 * The Sign-off tab: what a rig designer checks before building. The hold probability (the case's tolerances and how
 * likely the build holds) and the leanest drive, side by side on a wide screen.
 */
@Component({
  selector: 'qp-sign-off-tab',
  imports: [CautionPanel, HoldProbabilityPanel, LeanestPanel],
  template: `
    <div class="sign-off">
      <qp-hold-probability-panel />
      <qp-leanest-panel />
    </div>
    <!-- one set of cautions for both panels: what the rig designer signs off is then built and run -->
    <qp-caution-panel />
  `,
  styleUrl: '../tab.scss',
  styles: `
    .sign-off { display: grid; gap: 16px; grid-template-columns: repeat(auto-fit, minmax(min(100%, 640px), 1fr)); align-items: start; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class SignOffTab {}
