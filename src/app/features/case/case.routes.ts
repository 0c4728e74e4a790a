import type { Route, Routes, UrlMatchResult, UrlSegment } from '@angular/router';

import { ApiCaseRepository } from '../library/api-case-repository';
import { CASE_REPOSITORY } from './case-repository';
import { CASE_TABS } from './case-tabs';

/**
 * One route for `cases/new`, `cases/:caseId/r/:rev` and `cases/:caseId` (latest revision), so the page and its
 * workspace survive the step from a new case to its first saved revision (the router reuses a component while the
 * route config stays the same).
 */
export function caseUrlMatcher(segments: UrlSegment[]): UrlMatchResult | null {
  const [first, second, third] = segments;
  if (!first) return null;
  if (first.path === 'new') return { consumed: [first], posParams: {} };
  if (second?.path === 'r' && third && /^\d+$/.test(third.path)) {
    return { consumed: [first, second, third], posParams: { caseId: first, rev: third } };
  }
  return { consumed: [first], posParams: { caseId: first } };
}

const tabRoutes: Route[] = [
  { path: '', pathMatch: 'full', redirectTo: CASE_TABS[0].path },
  ...CASE_TABS.map((tab) => ({ path: tab.path, title: `${tab.label} · Quiverpoint`, loadComponent: tab.loadComponent })),
];

export const CASE_ROUTES: Routes = [
  {
    matcher: caseUrlMatcher,
    // Cases live in the lab's library on the server.
    providers: [{ provide: CASE_REPOSITORY, useExisting: ApiCaseRepository }],
    loadComponent: () => import('./case-page').then((m) => m.CasePage),
    children: tabRoutes,
  },
];
