import { ChangeDetectionStrategy, Component } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';

import { CAUTION_DEFERRAL, CAUTION_NOTES, CAUTION_TITLE } from '../../../../../shared/case/caution';

/** Safety notes for people who build the rig; shown beside the inputs, always visible. */
@Component({
  selector: 'qp-caution-panel',
  imports: [MatIconModule],
  template: `
    <section class="caution" aria-labelledby="caution-title">
      <h2 id="caution-title"><mat-icon aria-hidden="true">warning</mat-icon> {{ title }}</h2>
      <ul>
        @for (note of notes; track $index) {
          <li>{{ note }}</li>
        }
      </ul>
      <p>{{ deferral }}</p>
    </section>
  `,
  styles: `
    .caution {
      border-left: 4px solid var(--mat-sys-tertiary);
      background: var(--mat-sys-tertiary-container);
      color: var(--mat-sys-on-tertiary-container);
      border-radius: 8px;
      padding: 8px 16px;
    }
    h2 { display: flex; align-items: center; gap: 8px; font: var(--mat-sys-title-medium); margin: 8px 0; }
    ul { margin: 0; padding-left: 20px; }
    li { margin: 4px 0; }
    p { font: var(--mat-sys-body-small); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CautionPanel {
  protected readonly title = CAUTION_TITLE;
  protected readonly notes = CAUTION_NOTES;
  protected readonly deferral = CAUTION_DEFERRAL;
}
