import { inject } from '@angular/core';
import { Router, Routes } from '@angular/router';

import { authGuard } from './core/auth-guard';
import { Session } from './core/session';
import { Shell } from './core/shell';

export const routes: Routes = [
  {
    path: 'sign-in',
    title: 'Sign in · Quiverpoint',
    loadComponent: () => import('./features/sign-in/sign-in-page').then((m) => m.SignInPage),
  },
  {
    path: 'links/:token',
    title: 'Shared case · Quiverpoint',
    loadComponent: () => import('./features/case-links/visitor-page').then((m) => m.VisitorPage),
  },
  {
    path: '',
    component: Shell,
    canActivate: [authGuard],
    children: [
      {
        path: '',
        pathMatch: 'full',
        title: 'Home · Quiverpoint',
        loadComponent: () => import('./features/home/home-page').then((m) => m.HomePage),
      },
      {
        path: 'labs',
        pathMatch: 'full',
        // Redirects run before guards, so a signed-out visitor is sent to sign in here, keeping the intent.
        redirectTo: () => {
          const session = inject(Session);
          if (!session.isSignedIn()) {
            return inject(Router).createUrlTree(['/sign-in'], { queryParams: { returnUrl: '/labs' } });
          }
          const labId = session.currentLab()?.id;
          return labId ? `/labs/${labId}` : '/';
        },
      },
      {
        path: 'library',
        title: 'Case library · Quiverpoint',
        loadComponent: () => import('./features/library/library-page').then((m) => m.LibraryPage),
      },
      {
        path: 'cases/:caseId/r/:rev/recheck',
        title: 'Recheck · Quiverpoint',
        loadComponent: () => import('./features/recheck/recheck-page').then((m) => m.RecheckPage),
      },
      {
        path: 'admin/mail',
        title: 'Mail · Quiverpoint',
        loadComponent: () => import('./features/admin/admin-mail-page').then((m) => m.AdminMailPage),
      },
      {
        path: 'cases',
        loadChildren: () => import('./features/case/case.routes').then((m) => m.CASE_ROUTES),
      },
      {
        path: 'labs/:labId/jobs',
        title: 'Server jobs · Quiverpoint',
        loadComponent: () => import('./features/jobs/jobs-page').then((m) => m.JobsPage),
      },
      {
        path: 'labs/:labId',
        title: 'Lab · Quiverpoint',
        loadComponent: () => import('./features/labs/lab-page').then((m) => m.LabPage),
      },
    ],
  },
  { path: '**', redirectTo: '' },
];
