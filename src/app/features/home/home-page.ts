import { ChangeDetectionStrategy, Component, computed, inject } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatIconModule } from '@angular/material/icon';
import { RouterLink } from '@angular/router';

import { LabRole, Session } from '../../core/session';

const ROLE_SUMMARY: Record<LabRole, string> = {
  owner: 'You manage who belongs to this lab and can do everything the other roles can.',
  analyst: 'You create cases, save revisions and start runs.',
  reviewer: 'You recheck saved revisions and confirm or dispute their numbers.',
  viewer: 'You can read the cases and runs of this lab.',
};

@Component({
  selector: 'qp-home-page',
  imports: [MatCardModule, MatButtonModule, MatIconModule, RouterLink],
  templateUrl: './home-page.html',
  styleUrl: './home-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class HomePage {
  private readonly session = inject(Session);

  protected readonly user = this.session.user;
  protected readonly currentLab = this.session.currentLab;
  protected readonly currentRole = computed(() => this.session.currentMembership()?.role ?? null);
  protected readonly roleSummary = computed(() => {
    const role = this.currentRole();
    return role ? ROLE_SUMMARY[role] : null;
  });
  protected readonly otherLabs = computed(() =>
    this.session.memberships().filter((m) => m.lab.id !== this.currentLab()?.id),
  );

  protected switchLab(labId: string): void {
    this.session.selectLab(labId);
  }
}
