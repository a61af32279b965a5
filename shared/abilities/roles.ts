export const roles = ['tenant_admin', 'authoriser', 'contractor_lead', 'isolation_technician', 'gas_tester', 'control_room', 'auditor'] as const;
export type Role = (typeof roles)[number];

export const roleLabels: Record<Role, string> = {
  tenant_admin: 'Tenant admin',
  authoriser: 'Authoriser',
  contractor_lead: 'Contractor lead',
  isolation_technician: 'Isolation technician',
  gas_tester: 'Gas tester',
  control_room: 'Control room',
  auditor: 'Auditor',
};

export const qualificationKinds = [
  'gas_tester',
  'hot_work_holder',
  'cold_work_holder',
  'confined_space_entry',
  'excavation',
  'lockout_tagout',
  'isolation_verifier',
] as const;
export type QualificationKind = (typeof qualificationKinds)[number];

export const qualificationLabels: Record<QualificationKind, string> = {
  gas_tester: 'Authorised gas tester',
  hot_work_holder: 'Hot-work permit holder',
  cold_work_holder: 'Cold-work permit holder',
  confined_space_entry: 'Confined-space entry',
  excavation: 'Excavation',
  lockout_tagout: 'Lockout/tagout qualified',
  isolation_verifier: 'Isolation verifier',
};

export type OrganisationKind = 'operator' | 'contractor';
