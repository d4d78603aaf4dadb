import { Routes } from '@angular/router';

export const SELECTIVITY_ROUTES: Routes = [
  { path: '', title: 'Selectivity · Ligandry', loadComponent: () => import('./selectivity-matrix').then((m) => m.SelectivityMatrix) },
  { path: 'compare', title: 'Compare · Ligandry', loadComponent: () => import('./compare').then((m) => m.Compare) },
];
