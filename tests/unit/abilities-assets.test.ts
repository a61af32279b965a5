import { describe, expect, it } from 'vitest';
import { subject } from '@casl/ability';
import { defineAbilityFor, type Actor } from '@shared/abilities/define-ability';
import type { Role } from '@shared/abilities/roles';

// The rule and its reasons: docs/permissions.md, "Asset register".
const TENANT = 'tenant-bramblecote';
const OTHER_TENANT = 'tenant-harlowridge';
const CONTRACTOR_ORG = 'org-oxbow';

const actor = (role: Role, kind: 'operator' | 'contractor'): Actor => ({
  userId: `user-${role}`,
  tenantId: TENANT,
  memberships: [{ role, organisationId: kind === 'contractor' ? CONTRACTOR_ORG : 'org-operator', organisationKind: kind }],
});

const registerSubjects = ['Pipeline', 'IsolationPoint', 'Lock', 'Tag'] as const;
// A pipeline no permit of the contractor's organisation touches: reading it must not depend on a permit.
const unrelatedPipeline = { tenantId: TENANT, id: 'pipeline-bm16', contractorOrganisationId: 'org-someone-else' };

describe('asset register rules (defineAbilityFor)', () => {
  it.each(['contractor_lead', 'isolation_technician', 'gas_tester'] as const)(
    'when a %s of a contractor organisation asks to read any pipeline, point, lock or tag of the tenant they work in, then it is allowed',
    (role) => {
      const ability = defineAbilityFor(actor(role, 'contractor'));
      for (const s of registerSubjects) expect(ability.can('read', subject(s, { ...unrelatedPipeline })), s).toBe(true);
    },
  );

  it.each(['contractor_lead', 'isolation_technician', 'gas_tester', 'control_room', 'auditor'] as const)('when a %s asks for another tenant\'s register, then it is refused', (role) => {
    const ability = defineAbilityFor(actor(role, role === 'control_room' || role === 'auditor' ? 'operator' : 'contractor'));
    for (const s of registerSubjects) expect(ability.can('read', subject(s, { tenantId: OTHER_TENANT })), s).toBe(false);
  });

  it.each(['contractor_lead', 'isolation_technician', 'gas_tester', 'control_room', 'auditor'] as const)('when a %s tries to create or change the register, then it is refused', (role) => {
    const ability = defineAbilityFor(actor(role, role === 'control_room' || role === 'auditor' ? 'operator' : 'contractor'));
    for (const s of registerSubjects) {
      expect(ability.can('create', subject(s, { tenantId: TENANT })), `create ${s}`).toBe(false);
      expect(ability.can('update', subject(s, { tenantId: TENANT })), `update ${s}`).toBe(false);
    }
  });

  it.each(['tenant_admin', 'authoriser'] as const)('when a %s edits their own tenant\'s register, then create and update are allowed, and not in another tenant', (role) => {
    const ability = defineAbilityFor(actor(role, 'operator'));
    for (const s of registerSubjects) {
      expect(ability.can('create', subject(s, { tenantId: TENANT })), `create ${s}`).toBe(true);
      expect(ability.can('update', subject(s, { tenantId: TENANT })), `update ${s}`).toBe(true);
      expect(ability.can('update', subject(s, { tenantId: OTHER_TENANT })), `update other ${s}`).toBe(false);
    }
  });
});
