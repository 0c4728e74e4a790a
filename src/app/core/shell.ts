import { BreakpointObserver } from '@angular/cdk/layout';
import { ChangeDetectionStrategy, Component, ErrorHandler, computed, inject } from '@angular/core';
import { takeUntilDestroyed, toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatDividerModule } from '@angular/material/divider';
import { MatIconModule } from '@angular/material/icon';
import { MatListModule } from '@angular/material/list';
import { MatMenuModule } from '@angular/material/menu';
import { MatSelectModule } from '@angular/material/select';
import { MatSidenavModule } from '@angular/material/sidenav';
import { MatToolbarModule } from '@angular/material/toolbar';
import { Router, RouterLink, RouterLinkActive, RouterOutlet } from '@angular/router';
import { map } from 'rxjs';

import { Session } from './session';

interface NavItem {
  readonly label: string;
  readonly icon: string;
  readonly link: string;
  readonly exact: boolean;
}

/** Narrow screens get an overlay drawer instead of a side rail. */
const NARROW_QUERY = '(max-width: 839.98px)';

@Component({
  selector: 'qp-shell',
  imports: [
    MatToolbarModule,
    MatButtonModule,
    MatIconModule,
    MatMenuModule,
    MatSelectModule,
    MatSidenavModule,
    MatListModule,
    MatDividerModule,
    RouterOutlet,
    RouterLink,
    RouterLinkActive,
  ],
  templateUrl: './shell.html',
  styleUrl: './shell.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class Shell {
  private readonly session = inject(Session);
  private readonly router = inject(Router);
  private readonly errorHandler = inject(ErrorHandler);

  protected readonly narrow = toSignal(
    inject(BreakpointObserver)
      .observe(NARROW_QUERY)
      .pipe(map((state) => state.matches)),
    { initialValue: false },
  );
  protected readonly user = this.session.user;
  protected readonly memberships = this.session.memberships;
  protected readonly currentLab = this.session.currentLab;
  protected readonly currentRole = computed(() => this.session.currentMembership()?.role ?? null);
  protected readonly navItems = computed<readonly NavItem[]>(() => {
    const lab = this.currentLab();
    const items: NavItem[] = [
      { label: 'Home', icon: 'home', link: '/', exact: true },
      { label: 'Case library', icon: 'library_books', link: '/library', exact: false },
    ];
    if (this.session.canWriteCases()) items.push({ label: 'New case', icon: 'add_circle', link: '/cases/new', exact: false });
    if (lab) {
      items.push({ label: 'Lab members', icon: 'group', link: `/labs/${lab.id}`, exact: true });
      items.push({ label: 'Server jobs', icon: 'cloud_sync', link: `/labs/${lab.id}/jobs`, exact: false });
    }
    if (this.user()?.isSiteAdmin) items.push({ label: 'Mail', icon: 'mail', link: '/admin/mail', exact: false });
    return items;
  });

  constructor() {
    this.session
      .refresh()
      .pipe(takeUntilDestroyed())
      .subscribe({ error: (error: unknown) => this.errorHandler.handleError(error) });
  }

  protected switchLab(labId: string): void {
    this.session.selectLab(labId);
    if (this.router.url.startsWith('/labs/')) {
      void this.router.navigate(this.router.url.endsWith('/jobs') ? ['/labs', labId, 'jobs'] : ['/labs', labId]);
    }
  }

  protected signOut(): void {
    this.session.signOut().subscribe(() => void this.router.navigate(['/sign-in']));
  }
}
