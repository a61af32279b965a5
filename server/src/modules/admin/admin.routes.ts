// Tenant administration.
//   GET    /api/organisations                 everyone in the tenant (read)
//   POST   /api/organisations                 tenant admin
//   GET    /api/users                         tenant admin, authoriser, auditor, control room (contractor leads: own organisation)
//   PATCH  /api/memberships/:id               tenant admin (change role)
//   DELETE /api/memberships/:id               tenant admin
//   GET    /api/qualifications                tenant admin, authoriser, auditor
//   POST   /api/qualifications                tenant admin
//   POST   /api/invitations                   tenant admin
import { Router, type Request } from 'express';
import { z } from 'zod';
import { inviteInputSchema, membershipRoleInputSchema, organisationInputSchema, qualificationInputSchema, usersQuerySchema } from '@shared/schemas/auth.schema';
import { pageQuerySchema, uuidSchema } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { requireAbility, requireRecordAbility } from '../../middleware/require-ability';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import * as admin from './admin.service';

const idParams = z.strictObject({ id: uuidSchema });

// Checks the shared schema does not make yet (they belong there): dates PostgreSQL can store and that
// make sense for a certificate, and a reference free of control characters.
// eslint-disable-next-line no-control-regex -- refusing control characters is the point
const controlCharacters = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/;
const qualificationBodySchema = qualificationInputSchema.superRefine((q, ctx) => {
  for (const field of ['issuedOn', 'expiresOn'] as const) {
    if (q[field] < '1900-01-01' || q[field] > '2199-12-31') ctx.addIssue({ code: 'custom', path: [field], message: 'Use a date between 1900 and 2199.' });
  }
  if (q.reference && controlCharacters.test(q.reference)) ctx.addIssue({ code: 'custom', path: ['reference'], message: 'Reference contains characters that are not allowed.' });
});

export function createAdminRouter(deps: AppDeps) {
  const router = Router();
  router.use(['/organisations', '/users', '/memberships', '/qualifications', '/invitations'], requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });
  const readMembership = (req: Request, id: string) => admin.readMembership(deps, caller(req), id);

  router.get('/organisations', async (req, res) => {
    res.json(await admin.listOrganisations(deps, caller(req), parse(pageQuerySchema, req.query, 'query')));
  });

  router.post('/organisations', requireAbility('create', 'Organisation', 'organisations'), async (req, res) => {
    res.status(201).json(await admin.createOrganisation(deps, caller(req), parse(organisationInputSchema, req.body, 'organisation')));
  });

  router.get('/users', requireAbility('read', ['User', 'Membership'], 'people'), async (req, res) => {
    res.json(await admin.listUsers(deps, caller(req), parse(usersQuerySchema, req.query, 'query')));
  });

  router.patch('/memberships/:id', requireRecordAbility('update', 'Membership', 'membership', readMembership), async (req, res) => {
    const c = caller(req);
    const { id } = parse(idParams, req.params, 'path');
    const { role } = parse(membershipRoleInputSchema, req.body, 'membership');
    const { membership, from } = await admin.changeMembershipRole(deps, c, id, role);
    if (from !== role) req.log.info({ event: 'role_changed', membershipId: id, from, to: role, by: c.actor.userId }, 'role changed');
    res.json(membership);
  });

  router.delete('/memberships/:id', requireRecordAbility('delete', 'Membership', 'membership', readMembership), async (req, res) => {
    const c = caller(req);
    const { id } = parse(idParams, req.params, 'path');
    await admin.removeMembership(deps, c, id);
    req.log.info({ event: 'membership_removed', membershipId: id, by: c.actor.userId }, 'membership removed');
    res.status(204).end();
  });

  router.get('/qualifications', requireAbility('read', 'Qualification', 'qualifications'), async (req, res) => {
    res.json(await admin.listQualifications(deps, caller(req), parse(pageQuerySchema.extend({ userId: uuidSchema.optional() }), req.query, 'query')));
  });

  router.post('/qualifications', requireAbility('create', 'Qualification', 'qualifications'), async (req, res) => {
    res.status(201).json(await admin.createQualification(deps, caller(req), parse(qualificationBodySchema, req.body, 'qualification')));
  });

  router.post('/invitations', requireAbility('create', 'Invitation', 'invitations'), async (req, res) => {
    const input = parse(inviteInputSchema, req.body, 'invitation');
    await admin.inviteMember(deps, caller(req), input);
    res.status(202).json({ ok: true, email: input.email });
  });

  return router;
}
