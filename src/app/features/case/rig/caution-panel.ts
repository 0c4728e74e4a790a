import { ChangeDetectionStrategy, Component } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';

/** Safety notes for people who build the rig; shown beside the inputs, always visible. */
@Component({
  selector: 'qp-caution-panel',
  imports: [MatIconModule],
  template: `
    <section class="caution" aria-labelledby="caution-title">
      <h2 id="caution-title"><mat-icon aria-hidden="true">warning</mat-icon> Before you run the rig</h2>
      <ul>
        <li>Guard the crank, the connecting rod and every coupling; a rotating part can catch clothing, hair and fingers.</li>
        <li>Clamp the rig and the shaker to the bench; an unbalanced drive walks across the table.</li>
        <li>Keep hands and faces out of the swept volume of the body and of anything it can reach when it falls.</li>
        <li>Wear eye protection: bobs, screws and broken rods leave at speed when the drive runs fast.</li>
        <li>Stay inside the shaker's rated force, stroke and velocity; hitting the end stops damages it and throws the load.</li>
        <li>Keep an emergency stop within reach and test it before each session.</li>
      </ul>
      <p>These notes do not replace local codes, the machine makers' instructions or licensed practice; follow those first.</p>
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
export class CautionPanel {}
