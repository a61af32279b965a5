import { AbilityBuilder, createMongoAbility, type ForcedSubject, type MongoAbility, type MongoQuery, type RawRuleOf } from '@casl/ability';
import type { OrganisationKind, Role } from './roles';

export const actions = [
  'manage', 'read', 'create', 'update', 'delete',
  // permit events
  'request', 'approve', 'reject', 'accept', 'cancel', 'revalidate', 'suspend', 'resume', 'start_work', 'hand_back', 'return_to_service', 'close', 'handover',
  // isolation steps and checks
  'apply', 'verify', 'remove', 'acknowledge', 'record', 'verify_chain',
  // a personal lock on the permit's group lockbox
  'sign_on',
] as const;
export type Action = (typeof actions)[number];

export const subjects = [
  'Tenant', 'Organisation', 'User', 'Membership', 'Qualification', 'Invitation',
  'Pipeline', 'IsolationPoint', 'Lock', 'Tag',
  'Permit', 'IsolationStep', 'GasTest', 'Instrument', 'Check', 'Attachment', 'AuditEvent', 'Board', 'Calculator',
  'IsolationCertificate',
  // The management figures (issue 21): aggregates over the whole tenant, no single record.
  'Report',
  // The site's settings (time zone, records address, safety margins): the tenant admin reads and changes them.
  'TenantSettings',
  'all',
] as const;
export type SubjectName = (typeof subjects)[number];

// eslint-disable-next-line @typescript-eslint/no-explicit-any
type AnyRecord = Record<string, any>;
export type AppAbility = MongoAbility<[Action, SubjectName | (ForcedSubject<Exclude<SubjectName, 'all'>> & AnyRecord)], MongoQuery<AnyRecord>>;
export type AppRule = RawRuleOf<AppAbility>;

export interface ActorMembership {
  role: Role;
  organisationId: string;
  organisationKind: OrganisationKind;
}

export interface Actor {
  userId: string;
  tenantId: string;
  memberships: ActorMembership[];
}

type Can = AbilityBuilder<AppAbility>['can'];

const readAllInTenant: SubjectName[] = ['Tenant', 'Organisation', 'Pipeline', 'IsolationPoint', 'Lock', 'Tag', 'Instrument', 'Calculator'];

/** Tenant-wide, for records that belong to the site rather than to one contractor (isolation certificates). */
const tenantOf = (actor: Actor) => ({ tenantId: actor.tenantId });

/** What a permit-scoped read looks like: tenant-wide for operator staff, own organisation's permits for contractors. */
function permitScope(actor: Actor, m: ActorMembership) {
  return m.organisationKind === 'contractor'
    ? { tenantId: actor.tenantId, contractorOrganisationId: m.organisationId }
    : { tenantId: actor.tenantId };
}

const rulesByRole: Record<Role, (can: Can, actor: Actor, m: ActorMembership) => void> = {
  tenant_admin(can, a) {
    const t = { tenantId: a.tenantId };
    can(['read', 'update'], 'Tenant', t);
    can(['read', 'create', 'update', 'delete'], ['Organisation', 'Membership', 'Qualification', 'Invitation'], t);
    can('read', 'User', t);
    can(['read', 'create', 'update'], ['Pipeline', 'IsolationPoint', 'Lock', 'Tag', 'Instrument'], t);
    can('read', ['Permit', 'IsolationStep', 'GasTest', 'Check', 'Attachment', 'AuditEvent', 'Board'], t);
    can('verify_chain', 'AuditEvent', t);
    can('read', 'IsolationCertificate', t);
    can('read', 'Report', t);
    can(['read', 'update'], 'TenantSettings', t);
  },
  authoriser(can, a) {
    const t = { tenantId: a.tenantId };
    can(['read', 'create', 'update'], ['Pipeline', 'IsolationPoint', 'Lock', 'Tag', 'Instrument'], t);
    can('read', ['User', 'Membership', 'Qualification', 'AuditEvent', 'Board', 'IsolationStep', 'GasTest', 'Check', 'Attachment'], t);
    can(['read', 'create', 'update', 'request'], 'Permit', t);
    // Not 'acknowledge': only the control room acknowledges a return to service, which is what lets the permit close.
    can(['approve', 'reject', 'cancel', 'revalidate', 'suspend', 'resume', 'return_to_service', 'close'], 'Permit', t);
    can('create', 'Attachment', t);
    can('verify_chain', 'AuditEvent', t);
    // Records the exception that lets someone else take off a lock whose owner is not on site.
    can('approve', 'IsolationStep', t);
    // Isolation certificates (HSE HSG253): marks one long-term, re-checks it, returns it.
    can(['read', 'update', 'record', 'close'], 'IsolationCertificate', t);
    can('read', 'Report', t);
  },
  contractor_lead(can, a, m) {
    const scope = permitScope(a, m);
    // A lead may stop their own crew's work (and restart it, when it was they who stopped it: shared/permit/suspension.ts).
    can(['read', 'request', 'accept', 'cancel', 'start_work', 'suspend', 'hand_back', 'handover', 'resume', 'sign_on'], 'Permit', scope);
    can(['create', 'update'], 'Permit', scope);
    can('read', ['IsolationStep', 'GasTest', 'Check', 'Attachment'], scope);
    can('create', 'Attachment', scope);
    can('record', 'Check', scope);
    // A lockout-qualified person of a contractor re-checks a long-term isolation (the server checks the qualification).
    can(['read', 'record'], 'IsolationCertificate', tenantOf(a));
    const ownOrganisation = { tenantId: a.tenantId, organisationId: m.organisationId };
    can('read', 'Membership', ownOrganisation);
  },
  isolation_technician(can, a, m) {
    const scope = permitScope(a, m);
    can('read', ['Permit', 'IsolationStep', 'GasTest', 'Check', 'Attachment'], scope);
    can('sign_on', 'Permit', scope);
    can(['apply', 'verify', 'remove'], 'IsolationStep', scope);
    can('record', 'Check', scope);
    can('create', 'Attachment', scope);
    can(['read', 'record'], 'IsolationCertificate', tenantOf(a));
  },
  gas_tester(can, a, m) {
    const scope = permitScope(a, m);
    can('read', ['Permit', 'IsolationStep', 'GasTest', 'Check', 'Attachment'], scope);
    can('sign_on', 'Permit', scope);
    can('create', 'GasTest', scope);
    can('record', 'Check', scope);
    can('create', 'Attachment', scope);
    can(['read', 'record'], 'IsolationCertificate', tenantOf(a));
  },
  control_room(can, a) {
    const t = { tenantId: a.tenantId };
    can('read', ['Permit', 'IsolationStep', 'GasTest', 'Check', 'Attachment', 'Board', 'User'], t);
    can('acknowledge', ['IsolationStep', 'Permit'], t);
    can('suspend', 'Permit', t);
    can('read', 'IsolationCertificate', t);
  },
  auditor(can, a) {
    const t = { tenantId: a.tenantId };
    can('read', ['User', 'Membership', 'Qualification', 'Permit', 'IsolationStep', 'GasTest', 'Check', 'Attachment', 'AuditEvent', 'Board'], t);
    can('verify_chain', 'AuditEvent', t);
    can('read', 'IsolationCertificate', t);
    can('read', 'Report', t);
  },
};

export function defineRulesFor(actor: Actor): AppRule[] {
  const builder = new AbilityBuilder<AppAbility>(createMongoAbility);
  const tenant = { tenantId: actor.tenantId };
  if (actor.memberships.length > 0) builder.can('read', readAllInTenant, tenant);
  for (const m of actor.memberships) {
    const add = rulesByRole[m.role];
    if (!add) throw new Error(`Unknown role: ${String(m.role)}`);
    add(builder.can, actor, m);
  }
  return builder.rules;
}

export function defineAbilityFor(actor: Actor): AppAbility {
  return createMongoAbility<AppAbility>(defineRulesFor(actor));
}

export function abilityFromRules(rules: AppRule[]): AppAbility {
  return createMongoAbility<AppAbility>(rules);
}

export function hasRole(actor: Actor, role: Role) {
  return actor.memberships.some((m) => m.role === role);
}
