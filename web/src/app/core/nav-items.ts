import type { Capability } from '../auth/roles';

export interface NavItem {
  path: string;
  label: string;
  icon: string;
  capability: Capability;
  /** What the section is for, shown on its page. */
  summary: string;
  /** Not built yet: the route shows a clearly marked placeholder. */
  comingSoon: boolean;
}

export const NAV_ITEMS: readonly NavItem[] = [
  { path: 'compounds', label: 'Compounds', icon: 'science', capability: 'read', comingSoon: false,
    summary: 'Register compounds and batches, search by structure and text, and import SDF or CSV files.' },
  { path: 'assays', label: 'Assays', icon: 'biotech', capability: 'read', comingSoon: false,
    summary: 'Assay protocols per receptor, runs with raw data, fitted concentration–response curves and ligand-type calls.' },
  { path: 'review', label: 'Review', icon: 'fact_check', capability: 'review', comingSoon: false,
    summary: 'Submitted results with their curves and calls, to approve or reject with a comment.' },
  { path: 'sar', label: 'SAR table', icon: 'table_chart', capability: 'read', comingSoon: false,
    summary: 'Each series pivoted by receptor and parameter, with R-groups, selectivity, LE and LipE.' },
  { path: 'overview', label: 'Overview', icon: 'dashboard', capability: 'read', comingSoon: false,
    summary: 'Where a project stands: series and decisions, results awaiting review, the best ranked, potency against selectivity.' },
  { path: 'selectivity', label: 'Selectivity', icon: 'hub', capability: 'read', comingSoon: false,
    summary: 'Compounds against the receptor panel, margins against the primary target, side-by-side comparison.' },
  { path: 'admin', label: 'Admin', icon: 'manage_accounts', capability: 'manageUsers', comingSoon: false,
    summary: 'Users and roles.' },
];
