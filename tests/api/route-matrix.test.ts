// The role matrix: every API route, called as every demo role (and by nobody signed in), must answer
// what the CASL rules in shared/abilities say. Adding a route = adding one entry to `routes` below
// (sample-record factories live in tests/fixtures/matrix-samples.ts). The completeness check walks the
// routers the app really registered and fails, naming them, when a route has no entry here.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes, type Sequelize } from 'sequelize';
import { subject as caslSubject } from '@casl/ability';
import { packRules, unpackRules, type PackRule } from '@casl/ability/extra';
import { abilityFromRules, defineAbilityFor, defineRulesFor, type Action, type Actor, type AppAbility, type AppRule, type SubjectName } from '@shared/abilities/define-ability';
import type { MeResponse } from '@shared/types/auth';
import { DEMO_PASSWORD, startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { readAnswer, registeredApiRoutes } from '../fixtures/registered-routes';
import {
  instrumentBody, inventoryBody, monitorOf, onePixelPng, permitBody, pipelineBody, pointBody, sampleAttachment, sampleHandover, sampleHeldPermit, sampleInstrument,
  sampleAbsentCrew, sampleCrewHandOver, sampleCertificate, certificateLinkBody, sampleCrewOn, sampleHeldStep, sampleInventory, sampleLabel, sampleLockedStep, sampleMembership, samplePermit, samplePipeline, samplePoint, sampleProving, sampleStep, tokenFor,
  sampleDossier,
  type Keepers, type MatrixContext, type SampleFactory, type SampleRecord, type TenantIds,
} from '../fixtures/matrix-samples';

// ---------------------------------------------------------------------------------------------
// Who calls
// ---------------------------------------------------------------------------------------------
const demoRoles = [
  { key: 'tenant admin', email: 'admin@bramblecote.example' },
  { key: 'authoriser', email: 'authoriser@bramblecote.example' },
  { key: 'control room', email: 'control@bramblecote.example' },
  { key: 'contractor lead', email: 'lead@oxbow-repair.example' },
  { key: 'isolation technician + gas tester', email: 'tech@oxbow-repair.example' },
  { key: 'auditor', email: 'auditor@bramblecote.example' },
  { key: 'second-tenant authoriser', email: 'authoriser@harlowridge.example' },
] as const;

type Subject = Exclude<SubjectName, 'all'>;
type Access =
  | { kind: 'public' }
  | { kind: 'signed-in' }
  /** No record yet: allowed when the check passes, otherwise 403. */
  | { kind: 'type'; describe: string; allowed: (ability: AppAbility, actor: Actor, c: MatrixContext) => boolean }
  /**
   * A loaded record: not readable → 404 (its existence stays hidden), readable but not allowed → 403.
   * `readAs` when the route looks the record up as another subject first (a permit's gas tests: the Permit).
   */
  | { kind: 'record'; action: Action; subject: Subject; sample: SampleFactory; readAs?: Subject };

interface RouteCase {
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  /** The path as registered, with `:id` (and `:stepId` …) where record ids go. */
  path: string;
  access: Access;
  /** A body that is valid for a caller who is allowed (an allowed caller must never get a 4xx). */
  body?: (c: MatrixContext, sample?: SampleRecord) => unknown;
  /** A query string; a function when it names the sample record (GET /api/stream?permitId=…). */
  query?: string | ((params: Record<string, string>) => string);
  /** The call ends or replaces the session: run it on a throwaway sign-in of the same person. */
  ownSession?: true;
  /** The answer is an endless event stream: read the status and the first bytes, then hang up. */
  stream?: true;
  /** The body is a multipart upload of this file in the field "file". */
  upload?: { name: string; contentType: string; bytes: Buffer };
}

const open: Access = { kind: 'public' };
const signedIn: Access = { kind: 'signed-in' };
/** "May this caller <action> a <subject> in their tenant (with these fields)?" — what authorizeType asks. */
const can = (action: Action, subject: Subject, fields: (a: Actor, c: MatrixContext) => Record<string, unknown> = () => ({})): Access => ({
  kind: 'type',
  describe: `${action} ${subject}`,
  allowed: (ability, actor, c) => ability.can(action, caslSubject(subject, { tenantId: actor.tenantId, ...fields(actor, c) })),
});
/** "May this caller <action> some <subject>s?" — for lists that show each person the rows they may see. */
const canSome = (action: Action, subject: Subject): Access => ({
  kind: 'type',
  describe: `${action} some ${subject}s`,
  allowed: (ability, actor) => ability.rulesFor(action, subject).some((r) => !r.inverted && (r.conditions as { tenantId?: string } | undefined)?.tenantId === actor.tenantId),
});
const all = (...accesses: Access[]): Access => ({
  kind: 'type',
  describe: accesses.map((a) => (a.kind === 'type' ? a.describe : a.kind)).join(' and '),
  allowed: (ability, actor, c) => accesses.every((a) => a.kind === 'type' && a.allowed(ability, actor, c)),
});
const onRecord = (action: Action, subject: Subject, sample: SampleFactory, readAs?: Subject): Access => ({ kind: 'record', action, subject, sample, readAs });
/** The signature a signed event asks for: the caller's password again and their name typed. */
const signature = (c: MatrixContext) => ({ password: DEMO_PASSWORD, signedName: c.userName ?? 'Nobody' });
const isoDay = (d: Date) => d.toISOString().slice(0, 10);
const ofContractor = (_a: Actor, c: MatrixContext) => ({ contractorOrganisationId: c.tenant.contractorOrgId });

// ---------------------------------------------------------------------------------------------
// The table: one entry per registered API route
// ---------------------------------------------------------------------------------------------
const routes: RouteCase[] = [
  // health
  { method: 'GET', path: '/api/health', access: open },
  { method: 'GET', path: '/api/health/live', access: open },
  { method: 'GET', path: '/api/health/ready', access: open },
  { method: 'GET', path: '/api/meta', access: open },

  // auth
  { method: 'GET', path: '/api/auth/csrf', access: open },
  { method: 'POST', path: '/api/auth/sign-in', access: open, ownSession: true, body: (c) => ({ email: c.email ?? 'auditor@bramblecote.example', password: DEMO_PASSWORD }) },
  // Signing out twice is harmless, so it is open: it ends the session when there is one.
  { method: 'POST', path: '/api/auth/sign-out', access: open, ownSession: true },
  { method: 'GET', path: '/api/auth/me', access: signedIn },
  { method: 'POST', path: '/api/auth/switch-tenant', access: signedIn, body: (c) => ({ tenantId: c.tenant.id }) },
  { method: 'POST', path: '/api/auth/accept-invitation', access: open, body: async (c) => ({ token: await tokenFor(c, 'invite'), name: 'Matrix Invitee', password: 'matrix-new-password-2' }) },
  { method: 'POST', path: '/api/auth/forgot-password', access: open, body: (c) => ({ email: c.email ?? 'nobody@matrix.example' }) },
  { method: 'POST', path: '/api/auth/reset-password', access: open, body: async (c) => ({ token: await tokenFor(c, 'reset'), password: 'matrix-new-password-2' }) },

  // admin
  { method: 'GET', path: '/api/organisations', access: can('read', 'Organisation') },
  { method: 'POST', path: '/api/organisations', access: can('create', 'Organisation'), body: (c) => ({ name: c.unique('Matrix Contractor'), kind: 'contractor' }) },
  {
    method: 'GET',
    path: '/api/users',
    access: {
      kind: 'type',
      describe: 'read User, or read Membership of their own organisation',
      allowed: (ability, actor) =>
        ability.can('read', caslSubject('User', { tenantId: actor.tenantId })) ||
        actor.memberships.some((m) => ability.can('read', caslSubject('Membership', { tenantId: actor.tenantId, organisationId: m.organisationId }))),
    },
  },
  { method: 'PATCH', path: '/api/memberships/:id', access: onRecord('update', 'Membership', sampleMembership), body: () => ({ role: 'auditor' }) },
  { method: 'DELETE', path: '/api/memberships/:id', access: onRecord('delete', 'Membership', sampleMembership) },
  { method: 'GET', path: '/api/qualifications', access: can('read', 'Qualification') },
  {
    method: 'POST',
    path: '/api/qualifications',
    access: can('create', 'Qualification'),
    body: (c) => ({ userId: c.actor?.userId ?? c.users['admin@bramblecote.example'], kind: 'excavation', issuedOn: isoDay(c.srv.clock.now()), expiresOn: isoDay(new Date(c.srv.clock.now().getTime() + 365 * 86_400_000)) }),
  },
  { method: 'POST', path: '/api/invitations', access: can('create', 'Invitation'), body: (c) => ({ email: `${c.unique('invited')}@matrix.example`, organisationId: c.tenant.operatorOrgId, role: 'auditor' }) },
  // the site's settings (tenant admin only)
  { method: 'GET', path: '/api/tenant/settings', access: can('read', 'TenantSettings') },
  { method: 'PATCH', path: '/api/tenant/settings', access: can('update', 'TenantSettings'), body: () => ({ auditCheckpointHours: 12, recordsEmail: 'records@bramblecote.example' }) },

  // calculator
  { method: 'GET', path: '/api/calc/mud-plug', query: '?diameterIn=10', access: can('read', 'Calculator') },
  { method: 'GET', path: '/api/calc/pipe', query: '?nps=10&schedule=40', access: can('read', 'Calculator') },
  { method: 'GET', path: '/api/calc/pipe-sizes', access: can('read', 'Calculator') },
  { method: 'GET', path: '/api/calc/line-fill', query: '?idIn=10.02&lengthFt=100', access: can('read', 'Calculator') },
  { method: 'POST', path: '/api/calc/atmosphere', access: can('read', 'Calculator'), body: () => ({ readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 0 }, hotWork: true }) },

  // asset register
  { method: 'GET', path: '/api/pipelines', access: can('read', 'Pipeline') },
  { method: 'POST', path: '/api/pipelines', access: can('create', 'Pipeline'), body: pipelineBody },
  { method: 'GET', path: '/api/pipelines/:id', access: onRecord('read', 'Pipeline', samplePipeline) },
  { method: 'PATCH', path: '/api/pipelines/:id', access: onRecord('update', 'Pipeline', samplePipeline), body: () => ({ name: 'Matrix line, renamed' }) },
  { method: 'GET', path: '/api/isolation-points', access: can('read', 'IsolationPoint') },
  { method: 'POST', path: '/api/isolation-points', access: can('create', 'IsolationPoint'), body: (c) => pointBody(c) },
  { method: 'GET', path: '/api/isolation-points/:id', access: onRecord('read', 'IsolationPoint', samplePoint) },
  { method: 'PATCH', path: '/api/isolation-points/:id', access: onRecord('update', 'IsolationPoint', samplePoint), body: () => ({ description: 'Vent on the matrix line' }) },
  { method: 'GET', path: '/api/locks', access: can('read', 'Lock') },
  { method: 'POST', path: '/api/locks', access: can('create', 'Lock'), body: inventoryBody },
  { method: 'GET', path: '/api/locks/:id', access: onRecord('read', 'Lock', sampleInventory('/api/locks')) },
  { method: 'PATCH', path: '/api/locks/:id', access: onRecord('update', 'Lock', sampleInventory('/api/locks')), body: () => ({ notes: 'Checked by the matrix' }) },
  { method: 'GET', path: '/api/tags', access: can('read', 'Tag') },
  { method: 'POST', path: '/api/tags', access: can('create', 'Tag'), body: inventoryBody },
  { method: 'GET', path: '/api/tags/:id', access: onRecord('read', 'Tag', sampleInventory('/api/tags')) },
  { method: 'PATCH', path: '/api/tags/:id', access: onRecord('update', 'Tag', sampleInventory('/api/tags')), body: () => ({ notes: 'Checked by the matrix' }) },
  {
    method: 'POST',
    path: '/api/imports/assets',
    query: '?dryRun=true',
    access: all(can('create', 'Pipeline'), can('update', 'Pipeline'), can('create', 'IsolationPoint'), can('update', 'IsolationPoint')),
    body: () => ({ csv: 'record_type,pipeline_code\n' }),
  },
  { method: 'GET', path: '/api/exports/assets.csv', access: all(can('read', 'Pipeline'), can('read', 'IsolationPoint')) },
  // QR labels for locks and tags (issue 18)
  { method: 'GET', path: '/api/labels', query: '?kind=tag', access: can('read', 'Tag') },
  { method: 'GET', path: '/api/permits/:id/labels', access: onRecord('read', 'Permit', sampleLockedStep) },
  { method: 'GET', path: '/api/scan/lock/:code', access: onRecord('read', 'Lock', sampleLabel('/api/locks')) },
  { method: 'GET', path: '/api/scan/tag/:code', access: onRecord('read', 'Tag', sampleLabel('/api/tags')) },

  // permits
  { method: 'GET', path: '/api/permits', access: canSome('read', 'Permit') },
  { method: 'POST', path: '/api/permits', access: can('create', 'Permit', ofContractor), body: (c) => permitBody(c) },
  { method: 'GET', path: '/api/permits/:id', access: onRecord('read', 'Permit', samplePermit('draft')) },
  { method: 'PATCH', path: '/api/permits/:id', access: onRecord('update', 'Permit', samplePermit('draft')), body: (_c, s) => ({ version: s?.extra?.version, title: 'Matrix check: renamed' }) },
  {
    method: 'POST',
    path: '/api/permits/:id/transitions',
    access: onRecord('cancel', 'Permit', samplePermit('draft')),
    body: (_c, s) => ({ event: 'cancel', version: s?.extra?.version, reason: 'Matrix check: not needed' }),
  },
  {
    method: 'POST',
    path: '/api/permits/:id/checklist',
    access: onRecord('start_work', 'Permit', samplePermit('accepted')),
    body: (_c, s) => ({ list: 'checklist', key: s?.extra?.checklistKey, confirmed: true }),
  },
  { method: 'POST', path: '/api/permits/:id/hot-work-stopped', access: onRecord('hand_back', 'Permit', samplePermit('live', ['hot_work'])) },
  { method: 'GET', path: '/api/permits/:id/pdf', access: onRecord('read', 'Permit', samplePermit('draft')) },
  { method: 'POST', path: '/api/permits/:id/dossier', access: onRecord('read', 'Permit', samplePermit('approved')) },
  { method: 'GET', path: '/api/permits/:id/dossier/:jobId', access: onRecord('read', 'Permit', sampleDossier) },
  { method: 'GET', path: '/api/permits/:id/dossier/:jobId/pdf', access: onRecord('read', 'Permit', sampleDossier) },

  // isolations
  { method: 'GET', path: '/api/permits/:id/isolations', access: onRecord('read', 'Permit', samplePermit('draft')) },
  {
    method: 'PUT',
    path: '/api/permits/:id/isolations',
    access: onRecord('update', 'Permit', samplePermit('draft')),
    body: (_c, s) => ({ version: s?.extra?.version, steps: [{ tempLabel: 'Matrix vent', tempPosition: 10.5, kind: 'vent' }] }),
  },
  { method: 'GET', path: '/api/permits/:id/isolations/proposal', query: '?fromPosition=10&toPosition=11', access: onRecord('read', 'Permit', samplePermit('draft')) },
  { method: 'POST', path: '/api/permits/:id/isolations/:stepId/apply', access: onRecord('apply', 'IsolationStep', sampleStep('accepted', 'planned')), body: () => ({}) },
  { method: 'POST', path: '/api/permits/:id/isolations/:stepId/verify', access: onRecord('verify', 'IsolationStep', sampleStep('accepted', 'applied')), body: () => ({ method: 'position_checked' }) },
  { method: 'POST', path: '/api/permits/:id/isolations/:stepId/acknowledge', access: onRecord('acknowledge', 'IsolationStep', sampleStep('accepted', 'applied')), body: () => ({ what: 'applied' }) },
  { method: 'POST', path: '/api/permits/:id/isolations/:stepId/remove', access: onRecord('remove', 'IsolationStep', sampleStep('work_complete', 'applied')), body: () => ({}) },
  {
    method: 'POST',
    path: '/api/permits/:id/isolations/:stepId/removal-exception',
    access: onRecord('approve', 'IsolationStep', sampleLockedStep),
    body: (c) => ({
      absenceCheck: 'Matrix check: not on the gate log, site radio unanswered.',
      contactAttempts: [{ how: 'Phoned their mobile', at: new Date(c.srv.clock.now().getTime() - 60_000).toISOString() }],
      informPlan: 'Told at the gate before their next shift.',
      ...signature(c),
    }),
  },
  {
    method: 'POST',
    path: '/api/permits/:id/isolations/provings',
    access: onRecord('verify', 'IsolationStep', sampleStep('accepted', 'applied'), 'Permit'),
    body: (_c, s) => ({ stepId: s?.params.stepId, reading: 0, unit: 'psig' }),
  },
  { method: 'POST', path: '/api/permits/:id/isolations/provings/:provingId/end', access: onRecord('verify', 'IsolationStep', sampleProving, 'Permit'), body: () => ({ reading: 0 }) },
  // group lockout per person: the permit's lockbox (both demo tenants are set to per_person in beforeAll)
  { method: 'POST', path: '/api/permits/:id/crew/sign-on', access: onRecord('sign_on', 'Permit', samplePermit('isolated')), body: () => ({ personalLockNumber: 'MX-PL-2' }) },
  { method: 'POST', path: '/api/permits/:id/crew/sign-off', access: onRecord('read', 'Permit', sampleCrewOn), body: () => ({}) },
  // shift change (lock by lock and on the lockbox) and the absent crew member's personal lock (issue 16)
  {
    method: 'POST',
    path: '/api/permits/:id/isolations/:stepId/transfer',
    access: onRecord('read', 'IsolationStep', sampleHeldStep, 'Permit'),
    body: (c, s) => ({ lockId: s?.extra?.lockId, ...signature(c), oncoming: { email: (s?.extra?.oncoming as { email: string }).email, signedName: 'Matrix Oncoming', password: DEMO_PASSWORD } }),
  },
  {
    method: 'POST',
    path: '/api/permits/:id/crew/hand-over',
    access: onRecord('read', 'Permit', sampleCrewHandOver),
    body: (c, s) => ({ personalLockNumber: 'MX-PL-3', ...signature(c), oncoming: { email: (s?.extra?.oncoming as { email: string }).email, signedName: 'Matrix Oncoming', password: DEMO_PASSWORD } }),
  },
  {
    method: 'POST',
    path: '/api/permits/:id/crew/:userId/removal-exception',
    access: onRecord('approve', 'IsolationStep', sampleAbsentCrew(false), 'Permit'),
    body: (c) => ({
      absenceCheck: 'Matrix check: not on the gate log, site radio unanswered.',
      contactAttempts: [{ how: 'Phoned their mobile', at: new Date(c.srv.clock.now().getTime() - 60_000).toISOString() }],
      informPlan: 'Told at the gate before their next shift.',
      ...signature(c),
    }),
  },
  { method: 'POST', path: '/api/permits/:id/crew/:userId/remove', access: onRecord('sign_on', 'Permit', sampleAbsentCrew(true)), body: (c) => signature(c) },
  // isolation certificates and long-term isolations
  { method: 'GET', path: '/api/certificates', access: can('read', 'IsolationCertificate') },
  { method: 'GET', path: '/api/certificates/:id', access: onRecord('read', 'IsolationCertificate', sampleCertificate({ stepOn: true })) },
  { method: 'POST', path: '/api/permits/:id/certificate', access: onRecord('update', 'Permit', samplePermit('draft')), body: (c, s) => certificateLinkBody(c, s?.params.id) },
  {
    method: 'POST',
    path: '/api/certificates/:id/long-term',
    access: onRecord('update', 'IsolationCertificate', sampleCertificate({ stepOn: true })),
    body: () => ({ reason: 'Matrix check: the line stays shut until the new valve arrives.' }),
  },
  {
    method: 'POST',
    path: '/api/certificates/:id/rechecks',
    access: onRecord('record', 'IsolationCertificate', sampleCertificate({ stepOn: true, longTerm: true, qualifyCaller: true })),
    body: () => ({ locksAndTagsIntact: true, valvesStillClosed: true, gaugeReading: 0, gaugeUnit: 'psig' }),
  },
  { method: 'POST', path: '/api/certificates/:id/return', access: onRecord('close', 'IsolationCertificate', sampleCertificate()), body: () => ({}) },
  { method: 'GET', path: '/api/board', access: can('read', 'Board') },
  { method: 'GET', path: '/api/board/stream', access: can('read', 'Board'), stream: true },
  // The week ahead (issue 21): whoever reads the board reads the plan.
  { method: 'GET', path: '/api/plan', access: can('read', 'Board') },
  { method: 'GET', path: '/api/reports/overview', access: can('read', 'Report') },
  // live status: any reader of the named permit (an unreadable one is left out; none left answers 404)
  { method: 'GET', path: '/api/stream', access: onRecord('read', 'Permit', samplePermit('draft')), query: (p) => `?permitId=${p.id}`, stream: true },
  // "My work" (issue 18): every member of the tenant; each list follows the caller's own rules.
  { method: 'GET', path: '/api/my-work', access: signedIn },

  // audit trail
  { method: 'GET', path: '/api/audit/verify', access: can('verify_chain', 'AuditEvent') },
  { method: 'GET', path: '/api/audit/events', access: can('read', 'AuditEvent') },
  // the tenant-wide audit log (issue 21): the public key is public so a checkpoint can be checked without an account
  { method: 'GET', path: '/api/audit/actors', access: can('read', 'AuditEvent') },
  { method: 'GET', path: '/api/audit/export', access: can('read', 'AuditEvent'), query: '?format=csv&kind=reject' },
  { method: 'POST', path: '/api/audit/chain-checks', access: can('verify_chain', 'AuditEvent') },
  { method: 'GET', path: '/api/audit/chain-checks/latest', access: can('verify_chain', 'AuditEvent') },
  { method: 'GET', path: '/api/audit/checkpoints', access: can('read', 'AuditEvent') },
  { method: 'POST', path: '/api/audit/checkpoints', access: can('verify_chain', 'AuditEvent') },
  { method: 'GET', path: '/api/audit/public-key', access: open },

  // attachments
  {
    method: 'POST',
    path: '/api/permits/:id/attachments',
    access: onRecord('create', 'Attachment', samplePermit('draft'), 'Permit'),
    upload: { name: 'matrix.png', contentType: 'image/png', bytes: onePixelPng },
  },
  { method: 'GET', path: '/api/permits/:id/attachments', access: onRecord('read', 'Attachment', samplePermit('draft'), 'Permit') },
  { method: 'GET', path: '/api/attachments/:id', access: onRecord('read', 'Attachment', sampleAttachment) },

  // gas monitors, gas tests, timed checks, shift handovers
  { method: 'GET', path: '/api/instruments', access: can('read', 'Instrument') },
  { method: 'POST', path: '/api/instruments', access: can('create', 'Instrument'), body: instrumentBody },
  { method: 'PATCH', path: '/api/instruments/:id', access: onRecord('update', 'Instrument', sampleInstrument), body: () => ({ model: 'Matrix four-gas monitor, relabelled' }) },
  { method: 'GET', path: '/api/permits/:id/gas-tests', access: onRecord('read', 'GasTest', samplePermit('accepted'), 'Permit') },
  {
    method: 'POST',
    path: '/api/permits/:id/gas-tests',
    access: onRecord('create', 'GasTest', samplePermit('accepted'), 'Permit'),
    body: async (c) => ({ instrumentId: await monitorOf(c, c.tenant), place: 'work_area', testedAt: c.srv.clock.now().toISOString(), readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 0 } }),
  },
  {
    method: 'POST',
    path: '/api/permits/:id/gas-tests/import',
    access: onRecord('create', 'GasTest', samplePermit('accepted'), 'Permit'),
    body: async (c) => ({ csv: 'Time,O2,LEL,H2S,CO\n2026-01-01 08:00,20.9,0,0,0\n', instrumentId: await monitorOf(c, c.tenant), place: 'work_area', dryRun: true }),
  },
  { method: 'GET', path: '/api/permits/:id/regime', access: onRecord('read', 'GasTest', samplePermit('accepted'), 'Permit') },
  { method: 'PUT', path: '/api/permits/:id/gas-limits', access: onRecord('update', 'Permit', samplePermit('draft')), body: () => ({ lel: { max: 5 } }) },
  { method: 'GET', path: '/api/permits/:id/checks', access: onRecord('read', 'Check', samplePermit('accepted'), 'Permit') },
  {
    method: 'POST',
    path: '/api/permits/:id/checks',
    access: onRecord('record', 'Check', samplePermit('accepted'), 'Permit'),
    body: (c) => ({ kind: 'vent', checkedAt: c.srv.clock.now().toISOString(), vapourAwayFromWork: true, pressureBuilding: false }),
  },
  { method: 'GET', path: '/api/permits/:id/handovers', access: onRecord('read', 'Permit', samplePermit('live')) },
  {
    method: 'POST',
    path: '/api/permits/:id/handovers',
    access: onRecord('handover', 'Permit', sampleHeldPermit),
    body: (c, s) => ({ toUserId: s?.extra?.toUserId, openPoints: 'Matrix check: vent V-2 left open, monitor on site.', ...signature(c) }),
  },
  { method: 'POST', path: '/api/permits/:id/handovers/:handoverId/accept', access: onRecord('handover', 'Permit', sampleHandover), body: (c) => signature(c) },
];

// ---------------------------------------------------------------------------------------------
// The run
// ---------------------------------------------------------------------------------------------
let srv: TestServer;
let db: Sequelize;
const tenants: Record<string, TenantIds> = {};
const keepers: Record<string, Keepers> = {};
const users: Record<string, string> = {};
const sessions = new Map<string, { client: ApiClient; actor: Actor; me: MeResponse }>();
let counter = 0;
let pairs = 0;
let foreignCalls = 0;
const outcomes: Record<string, number> = {};

const unique = (prefix: string) => `${prefix} ${Date.now().toString(36)}-${++counter}`.replace(/\s+/g, '-').toLowerCase();

function actorFrom(me: MeResponse): Actor {
  const active = me.memberships.filter((m) => m.tenantId === me.activeTenantId);
  return { userId: me.user.id, tenantId: me.activeTenantId!, memberships: active.map((m) => ({ role: m.role, organisationId: m.organisationId, organisationKind: m.organisationKind })) };
}

function contextFor(email: string | null): MatrixContext {
  const s = email ? sessions.get(email) : undefined;
  const tenant = s ? Object.values(tenants).find((t) => t.id === s.actor.tenantId)! : tenants.bramblecote;
  const other = Object.values(tenants).find((t) => t.id !== tenant.id)!;
  return { db, srv, email, actor: s?.actor ?? null, userName: s?.me.user.name ?? null, tenant, other, keepers, users, unique };
}

const withParams = (path: string, params: Record<string, string>) => path.replace(/:([A-Za-z_]+)/g, (_m, name: string) => params[name] ?? `:${name}`);

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- answers of every route, read loosely
async function send(client: ApiClient, route: RouteCase, path: string, body: unknown, params: Record<string, string> = {}): Promise<{ status: number; body: Record<string, any> }> {
  const url = path + (typeof route.query === 'function' ? route.query(params) : (route.query ?? ''));
  if (route.stream) {
    // An endless event stream: read the status and the first bytes, then hang up.
    const answer = await readAnswer(client.agent.get(url) as unknown as Parameters<typeof readAnswer>[0]);
    return { status: answer.status, body: (typeof answer.body === 'object' && answer.body) || { text: answer.body } };
  }
  if (route.upload) {
    const { name, contentType, bytes } = route.upload;
    return client.agent.post(url).set('x-csrf-token', client.csrf).attach('file', bytes, { filename: name, contentType });
  }
  switch (route.method) {
    case 'GET':
      return client.get(url);
    case 'POST':
      return client.post(url, body);
    case 'PUT':
      return client.put(url, body);
    case 'PATCH':
      return client.patch(url, body);
    case 'DELETE':
      return client.delete(url);
  }
}

beforeAll(async () => {
  // Every demo person signs in more often than the default per-account limit allows in one window.
  srv = await startTestServer({ authLimits: { perIp: 100_000, perAccount: 100_000, windowMs: 60_000 } });
  db = srv.deps.sequelize;
  const rows = await db.query<{ id: string; slug: string; kind: string; org: string }>(
    `SELECT t.id, t.slug, o.kind, o.id AS org FROM tenants t JOIN organisations o ON o.tenant_id = t.id WHERE t.slug IN ('bramblecote', 'harlowridge') ORDER BY o.name`,
    { type: QueryTypes.SELECT },
  );
  for (const r of rows) {
    const t = (tenants[r.slug] ??= { id: r.id, slug: r.slug, operatorOrgId: '', contractorOrgId: '' });
    if (r.kind === 'operator') t.operatorOrgId = r.org;
    else t.contractorOrgId = r.org;
  }
  for (const u of await db.query<{ id: string; email: string }>(`SELECT id, email FROM users`, { type: QueryTypes.SELECT })) users[u.email] = u.id;
  // The crew routes answer only where group lockout is per person; no other route here depends on the setting.
  await db.query(`UPDATE tenants SET settings = coalesce(settings, '{}'::jsonb) || '{"groupLockout":"per_person"}'::jsonb WHERE slug IN ('bramblecote', 'harlowridge')`);
  for (const role of demoRoles) {
    const client = await srv.signIn(role.email);
    const me = (await client.get('/api/auth/me')).body as MeResponse;
    sessions.set(role.email, { client, me, actor: actorFrom(me) });
  }
  // Keepers make the sample records on their own sessions, so no caller's session is touched.
  keepers.bramblecote = { assets: await srv.signIn('admin@bramblecote.example'), permits: await srv.signIn('authoriser@bramblecote.example') };
  const harlow = await srv.signIn('authoriser@harlowridge.example');
  keepers.harlowridge = { assets: harlow, permits: harlow };
});

afterAll(async () => {
  const byOutcome = Object.entries(outcomes).map(([k, n]) => `${n} × ${k}`).join(', ');
  console.log(`route matrix: checked ${pairs} (route, role) pairs across ${routes.length} routes and ${demoRoles.length + 1} callers (${byOutcome}), plus ${foreignCalls} calls with another tenant's record id`);
  await srv?.close();
});

describe('the route table', () => {
  it('when the app registers an API route, then the matrix has an entry for it (and no entry names a route that is gone)', () => {
    const registered = registeredApiRoutes(srv);
    const inTable = routes.map((r) => `${r.method} ${r.path}`);
    const missing = registered.filter((r) => !inTable.includes(r));
    const stale = inTable.filter((r) => !registered.includes(r));
    expect(registered.length).toBeGreaterThan(10);
    expect(missing, `Routes without an entry in tests/api/route-matrix.test.ts — add one each:\n  ${missing.join('\n  ')}`).toEqual([]);
    expect(stale, `Entries for routes the app no longer registers:\n  ${stale.join('\n  ')}`).toEqual([]);
    expect(new Set(inTable).size, 'a route is listed twice').toBe(inTable.length);
  });

  it.each(demoRoles.map((r) => [r.key, r.email]))('when %s signs in, then /api/auth/me carries exactly the rules defineRulesFor gives them', (_key, email) => {
    const s = sessions.get(email)!;
    expect(s.actor.memberships.length).toBeGreaterThan(0);
    expect(s.me.rules).toEqual(JSON.parse(JSON.stringify(packRules(defineRulesFor(s.actor)))));
    // The client rebuilds its ability from those packed rules; it must decide as the server does.
    const client = abilityFromRules(unpackRules(s.me.rules as PackRule<AppRule>[]) as AppRule[]);
    const server = defineAbilityFor(s.actor);
    for (const rule of server.rules) {
      for (const action of [rule.action].flat()) {
        for (const subj of [rule.subject].flat()) {
          if (!subj || subj === 'all') continue;
          const sample = caslSubject(subj as Subject, { tenantId: s.actor.tenantId, organisationId: s.actor.memberships[0].organisationId, contractorOrganisationId: s.actor.memberships[0].organisationId });
          expect(client.can(action, sample), `${action} ${String(subj)}`).toBe(server.can(action, sample));
        }
      }
    }
  });
});

const callers: { key: string; email: string | null }[] = [{ key: 'nobody signed in', email: null }, ...demoRoles.map((r) => ({ key: r.key as string, email: r.email as string }))];

for (const route of routes) {
  describe(`${route.method} ${route.path}`, () => {
    for (const caller of callers) {
      it(`when ${caller.key} calls it, then the answer is what the CASL rules give`, async () => {
        const c = contextFor(caller.email);
        let client = caller.email ? sessions.get(caller.email)!.client : await srv.anonymous();
        if (route.ownSession) client = caller.email ? await srv.signIn(caller.email) : await srv.anonymous();

        // 0 stands for "any 2xx".
        let expected: number;
        let why: string;
        let path = route.path;
        let sample: SampleRecord | undefined;
        const access = route.access;
        if (access.kind === 'record') {
          sample = await access.sample(c, c.tenant);
          path = withParams(path, sample.params);
          if (!c.actor) [expected, why] = [401, 'sign-in needed'];
          else {
            const ability = defineAbilityFor(c.actor);
            const subj = caslSubject(access.subject, { ...sample.fields });
            const readAs = access.readAs ?? access.subject;
            if (!ability.can('read', caslSubject(readAs, { ...sample.fields }))) [expected, why] = [404, `may not read this ${readAs}`];
            else if (!ability.can(access.action, subj)) [expected, why] = [403, `may read but not ${access.action} this ${access.subject}`];
            else [expected, why] = [0, `may ${access.action} this ${access.subject}`];
          }
        } else if (path.includes(':')) {
          throw new Error(`${route.method} ${route.path} takes a record id: give it onRecord(…) so the matrix can make a sample.`);
        } else if (access.kind === 'public') [expected, why] = [0, 'open to anyone'];
        else if (!c.actor) [expected, why] = [401, 'sign-in needed'];
        else if (access.kind === 'signed-in') [expected, why] = [0, 'any signed-in person'];
        else {
          const ok = access.allowed(defineAbilityFor(c.actor), c.actor, c);
          [expected, why] = [ok ? 0 : 403, `${ok ? 'may' : 'may not'} ${access.describe}`];
        }

        const body = route.body ? await route.body(c, sample) : undefined;
        const res = await send(client, route, path, body, sample?.params);
        // GET /api/auth/csrf hands out a new token (and cookie): keep the client's copy in step.
        if (typeof res.body?.csrfToken === 'string') client.csrf = res.body.csrfToken;
        pairs++;
        outcomes[expected === 0 ? '2xx' : String(expected)] = (outcomes[expected === 0 ? '2xx' : String(expected)] ?? 0) + 1;
        const detail = `${caller.key} → ${route.method} ${path}: expected ${expected === 0 ? '2xx' : expected} (${why}), got ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`;
        if (expected === 0) expect(res.status >= 200 && res.status < 300, detail).toBe(true);
        else {
          expect(res.status, detail).toBe(expected);
          expect(res.body?.error?.code, detail).toBe(({ 401: 'unauthenticated', 403: 'forbidden', 404: 'not_found' } as Record<number, string>)[expected]);
        }

        // By-id routes: another tenant's record is answered as if it did not exist.
        if (access.kind === 'record' && c.actor) {
          const foreign = await access.sample(c, c.other);
          const again = route.body ? await route.body(c, foreign) : undefined;
          const res2 = await send(client, route, withParams(route.path, foreign.params), again, foreign.params);
          foreignCalls++;
          expect(res2.status, `${caller.key} → ${route.method} with ${c.other.slug}'s record: ${JSON.stringify(res2.body)}`).toBe(404);
          expect(res2.body.error.code).toBe('not_found');
          for (const id of Object.values(foreign.params)) expect(JSON.stringify(res2.body)).not.toContain(id);
        }
      });
    }
  });
}
