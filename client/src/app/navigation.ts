import type { AppAbility, SubjectName } from '@shared/abilities/define-ability';
import type { MyWorkListKey } from '@shared/types/my-work';

export interface NavItem {
  to: string;
  label: string;
  /** Shown when the user may read this kind of record. */
  subject: Exclude<SubjectName, 'all'>;
  action?: 'read' | 'create';
  /** The "My work" counts this entry's badge adds up (none: no badge). */
  counts?: readonly MyWorkListKey[] | 'all';
}

/** Main navigation; each entry appears only when the CASL rules allow it. Features add their entries here. */
export const navItems: NavItem[] = [
  { to: '/', label: 'My work', subject: 'Tenant', counts: 'all' },
  { to: '/permits', label: 'Permits', subject: 'Permit', counts: ['toApprove', 'toAccept', 'sentBack'] },
  { to: '/board', label: 'Live board', subject: 'Board', counts: ['isolationsToAcknowledge'] },
  { to: '/plan', label: 'Week ahead', subject: 'Board' },
  { to: '/certificates', label: 'Isolation certificates', subject: 'IsolationCertificate' },
  { to: '/pipelines', label: 'Pipelines', subject: 'Pipeline' },
  { to: '/locks', label: 'Locks & tags', subject: 'Lock' },
  { to: '/scan', label: 'Scan a label', subject: 'Lock' },
  { to: '/instruments', label: 'Instruments', subject: 'Instrument' },
  { to: '/admin/users', label: 'People', subject: 'Membership', action: 'create' },
  { to: '/admin/organisations', label: 'Organisations', subject: 'Organisation', action: 'create' },
  { to: '/admin/qualifications', label: 'Qualifications', subject: 'Qualification' },
  { to: '/admin/settings', label: 'Settings', subject: 'TenantSettings' },
  { to: '/audit', label: 'Audit log', subject: 'AuditEvent' },
  { to: '/reports', label: 'Reports', subject: 'Report' },
  { to: '/calculator', label: 'Calculator', subject: 'Calculator' },
];

/** The number an entry's badge shows, from the "My work" counts. */
export const navCount = (item: NavItem, work: { counts: Record<MyWorkListKey, number>; total: number } | undefined) =>
  !item.counts || !work ? 0 : item.counts === 'all' ? work.total : item.counts.reduce((n, k) => n + work.counts[k], 0);

export const visibleNav = (ability: AppAbility) => navItems.filter((i) => ability.can(i.action ?? 'read', i.subject));
