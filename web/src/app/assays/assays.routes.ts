import { Routes } from '@angular/router';

/** Assay protocols per receptor, one page per assay with its runs, and one page per run (this whole section is lazy). */
export const ASSAY_ROUTES: Routes = [
  { path: '', title: 'Assays · Ligandry', loadComponent: () => import('./assay-list/assay-list').then((m) => m.AssayList) },
  { path: 'runs/:id', title: 'Run · Ligandry', loadComponent: () => import('./run-detail/run-detail').then((m) => m.RunDetail) },
  { path: ':id', title: 'Assay · Ligandry', loadComponent: () => import('./assay-detail/assay-detail').then((m) => m.AssayDetail) },
];
