import type { AppAbility, SubjectName } from '@shared/abilities/define-ability';

export interface NavItem {
  to: string;
  label: string;
  /** Shown when the user may read this kind of record. */
  subject: Exclude<SubjectName, 'all'>;
  action?: 'read' | 'create';
}

/** Main navigation; each entry appears only when the CASL rules allow it. Features add their entries here. */
export const navItems: NavItem[] = [
  { to: '/', label: 'Overview', subject: 'Tenant' },
  { to: '/permits', label: 'Permits', subject: 'Permit' },
  { to: '/board', label: 'Live board', subject: 'Board' },
  { to: '/certificates', label: 'Isolation certificates', subject: 'IsolationCertificate' },
  { to: '/pipelines', label: 'Pipelines', subject: 'Pipeline' },
  { to: '/locks', label: 'Locks & tags', subject: 'Lock' },
  { to: '/instruments', label: 'Instruments', subject: 'Instrument' },
  { to: '/admin/users', label: 'People', subject: 'Membership', action: 'create' },
  { to: '/admin/organisations', label: 'Organisations', subject: 'Organisation', action: 'create' },
  { to: '/admin/qualifications', label: 'Qualifications', subject: 'Qualification' },
  { to: '/calculator', label: 'Calculator', subject: 'Calculator' },
];

export const visibleNav = (ability: AppAbility) => navItems.filter((i) => ability.can(i.action ?? 'read', i.subject));
