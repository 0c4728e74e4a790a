import type { Type } from '@angular/core';

/** One tab of the case page: a child route of the case, shown in the tab bar in this order. */
export interface CaseTab {
  readonly path: string;
  readonly label: string;
  readonly loadComponent: () => Promise<Type<unknown>>;
}

/** The case page's tabs. Other features append their tabs here (Bench, History). */
export const CASE_TABS: CaseTab[] = [
  { path: 'rig', label: 'Rig', loadComponent: () => import('./rig/rig-tab').then((m) => m.RigTab) },
  { path: 'motion', label: 'Motion', loadComponent: () => import('./motion/motion-tab').then((m) => m.MotionTab) },
  { path: 'margins', label: 'Margins', loadComponent: () => import('./margins/margins-tab').then((m) => m.MarginsTab) },
  { path: 'sweeps', label: 'Sweeps', loadComponent: () => import('./sweeps/sweeps-tab').then((m) => m.SweepsTab) },
  { path: 'map', label: 'Map', loadComponent: () => import('./map/map-tab').then((m) => m.MapTab) },
  { path: 'sign-off', label: 'Sign-off', loadComponent: () => import('./sign-off/sign-off-tab').then((m) => m.SignOffTab) },
  { path: 'bench', label: 'Bench', loadComponent: () => import('../bench/bench-tab').then((m) => m.BenchTab) },
  { path: 'history', label: 'History', loadComponent: () => import('../history/history-tab').then((m) => m.HistoryTab) },
];
