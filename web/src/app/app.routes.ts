import { inject } from '@angular/core';
import { Routes } from '@angular/router';
import { AuthStore } from './auth/auth-store';
import { authGuard, capabilityGuard } from './auth/auth-guard';
import { NAV_ITEMS } from './core/nav-items';

const comingSoon = NAV_ITEMS.filter((item) => item.comingSoon).map((item) => ({
  path: item.path,
  canActivate: [capabilityGuard(item.capability)],
  title: `${item.label} · Ligandry`,
  data: { section: item },
  loadComponent: () => import('./core/coming-soon').then((m) => m.ComingSoon),
}));

export const routes: Routes = [
  { path: 'sign-in', title: 'Sign in · Ligandry', loadComponent: () => import('./auth/login').then((m) => m.Login) },
  { path: 'reset-password', title: 'Reset password · Ligandry', data: { mode: 'reset' }, loadComponent: () => import('./auth/new-password').then((m) => m.NewPassword) },
  { path: 'accept-invitation', title: 'Accept invitation · Ligandry', data: { mode: 'invitation' }, loadComponent: () => import('./auth/new-password').then((m) => m.NewPassword) },
  {
    path: '',
    canActivate: [authGuard],
    loadComponent: () => import('./core/shell').then((m) => m.Shell),
    children: [
      // Leads land on their project overview, everyone else on the SAR table.
      { path: '', pathMatch: 'full', redirectTo: () => (inject(AuthStore).user()?.role === 'lead' ? 'overview' : 'sar') },
      ...comingSoon,
      {
        path: 'compounds',
        canActivate: [capabilityGuard('read')],
        loadChildren: () => import('./compounds/compounds.routes').then((m) => m.COMPOUND_ROUTES),
      },
      {
        path: 'sar',
        title: 'SAR table · Ligandry',
        canActivate: [capabilityGuard('read')],
        loadComponent: () => import('./sar-table/sar-table').then((m) => m.SarTable),
      },
      {
        path: 'selectivity',
        canActivate: [capabilityGuard('read')],
        loadChildren: () => import('./selectivity/selectivity.routes').then((m) => m.SELECTIVITY_ROUTES),
      },
      {
        path: 'overview',
        title: 'Project overview · Ligandry',
        canActivate: [capabilityGuard('read')],
        loadComponent: () => import('./selectivity/overview').then((m) => m.Overview),
      },
      {
        path: 'assays',
        canActivate: [capabilityGuard('read')],
        loadChildren: () => import('./assays/assays.routes').then((m) => m.ASSAY_ROUTES),
      },
      {
        path: 'review',
        title: 'Review · Ligandry',
        canActivate: [capabilityGuard('review')],
        loadComponent: () => import('./review/review').then((m) => m.Review),
      },
      {
        path: 'admin/mail',
        title: 'Development mailbox · Ligandry',
        canActivate: [capabilityGuard('manageUsers')],
        loadComponent: () => import('./admin/mailbox').then((m) => m.Mailbox),
      },
      {
        path: 'admin',
        title: 'Admin · Ligandry',
        canActivate: [capabilityGuard('manageUsers')],
        loadComponent: () => import('./admin/user-admin').then((m) => m.UserAdmin),
      },
      { path: 'not-allowed', title: 'Not allowed · Ligandry', loadComponent: () => import('./core/not-allowed').then((m) => m.NotAllowed) },
      { path: '**', title: 'Not found · Ligandry', loadComponent: () => import('./core/not-found').then((m) => m.NotFound) },
    ],
  },
];
