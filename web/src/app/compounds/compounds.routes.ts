import { Routes } from '@angular/router';
import { capabilityGuard } from '../auth/auth-guard';

/** The registry: list, register, import and one page per compound (this whole section is lazy). */
export const COMPOUND_ROUTES: Routes = [
  { path: '', title: 'Compounds · Ligandry', loadComponent: () => import('./compound-list/compound-list').then((m) => m.CompoundList) },
  {
    path: 'register',
    title: 'Register a compound · Ligandry',
    canActivate: [capabilityGuard('register')],
    loadComponent: () => import('./compound-register/compound-register').then((m) => m.CompoundRegister),
  },
  {
    path: 'import',
    title: 'Import compounds · Ligandry',
    canActivate: [capabilityGuard('register')],
    loadComponent: () => import('./compound-import/compound-import').then((m) => m.CompoundImport),
  },
  { path: ':ref', title: 'Compound · Ligandry', loadComponent: () => import('./compound-detail/compound-detail').then((m) => m.CompoundDetail) },
];
