// Tenant administration.
//   GET    /api/organisations                 everyone in the tenant (read)
//   POST   /api/organisations                 tenant admin
//   GET    /api/users                         tenant admin, authoriser, auditor, control room (contractor leads: own organisation)
//   PATCH  /api/memberships/:id               tenant admin (change role)
//   DELETE /api/memberships/:id               tenant admin
//   GET    /api/qualifications                tenant admin, authoriser, auditor
//   POST   /api/qualifications                tenant admin
//   POST   /api/invitations                   tenant admin
import { Router } from 'express';
import { z } from 'zod';
import { subject } from '@casl/ability';
import { inviteInputSchema, membershipRoleInputSchema, organisationInputSchema, qualificationInputSchema, usersQuerySchema } from '@shared/schemas/auth.schema';
import { pageQuerySchema, uuidSchema } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { AppError } from '../../errors/app-error';
import { invite } from '../auth/auth.service';
import * as admin from './admin.service';
import { withTenant } from '../../db/sequelize';

const idParams = z.object({ id: uuidSchema });

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
  const { sequelize } = deps;
  router.use(['/organisations', '/users', '/memberships', '/qualifications', '/invitations'], requireTenant);

  router.get('/organisations', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'Organisation', { tenantId: actor.tenantId }, 'organisations');
    const q = parse(pageQuerySchema, req.query, 'query');
    res.json(await withTenant(sequelize, actor.tenantId, () => admin.listOrganisations(sequelize, actor.tenantId, q.page, q.pageSize)));
  });

  router.post('/organisations', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'create', 'Organisation', { tenantId: actor.tenantId }, 'organisations');
    const input = parse(organisationInputSchema, req.body, 'organisation');
    res.status(201).json(await withTenant(sequelize, actor.tenantId, () => admin.createOrganisation(sequelize, actor.tenantId, input)));
  });

  router.get('/users', async (req, res) => {
    const { actor, ability } = actorOf(req);
    const q = parse(usersQuerySchema, req.query, 'query');
    if (ability.can('read', subject('User', { tenantId: actor.tenantId }))) return res.json(await withTenant(sequelize, actor.tenantId, () => admin.listUsers(sequelize, actor.tenantId, q)));
    // A contractor lead sees the members of their own organisation only.
    const own = actor.memberships.find((m) => ability.can('read', subject('Membership', { tenantId: actor.tenantId, organisationId: m.organisationId })));
    if (!own) throw AppError.forbidden('Your role does not allow you to list people.');
    res.json(await withTenant(sequelize, actor.tenantId, () => admin.listUsers(sequelize, actor.tenantId, q, own.organisationId)));
  });

  router.patch('/memberships/:id', async (req, res) => {
    const { actor, ability } = actorOf(req);
    const { id } = parse(idParams, req.params, 'path');
    const record = authorizeRecord(ability, 'update', 'Membership', await withTenant(sequelize, actor.tenantId, () => admin.findMembership(sequelize, actor.tenantId, id)), 'membership');
    const { role } = parse(membershipRoleInputSchema, req.body, 'membership');
    if (record.userId === actor.userId && record.role === 'tenant_admin' && role !== 'tenant_admin') {
      throw AppError.unprocessable('You cannot remove your own tenant admin role; ask another admin.');
    }
    await withTenant(sequelize, actor.tenantId, () => admin.changeMembershipRole(sequelize, actor.tenantId, id, role));
    req.log.info({ event: 'role_changed', membershipId: id, from: record.role, to: role, by: actor.userId }, 'role changed');
    res.json({ ...record, role });
  });

  router.delete('/memberships/:id', async (req, res) => {
    const { actor, ability } = actorOf(req);
    const { id } = parse(idParams, req.params, 'path');
    const record = authorizeRecord(ability, 'delete', 'Membership', await withTenant(sequelize, actor.tenantId, () => admin.findMembership(sequelize, actor.tenantId, id)), 'membership');
    if (record.userId === actor.userId) throw AppError.unprocessable('You cannot remove your own membership.');
    await withTenant(sequelize, actor.tenantId, () => admin.removeMembership(sequelize, actor.tenantId, id));
    req.log.info({ event: 'membership_removed', membershipId: id, by: actor.userId }, 'membership removed');
    res.status(204).end();
  });

  router.get('/qualifications', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'Qualification', { tenantId: actor.tenantId }, 'qualifications');
    const q = parse(pageQuerySchema.extend({ userId: uuidSchema.optional() }), req.query, 'query');
    res.json(await withTenant(sequelize, actor.tenantId, () => admin.listQualifications(sequelize, actor.tenantId, q.page, q.pageSize, q.userId)));
  });

  router.post('/qualifications', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'create', 'Qualification', { tenantId: actor.tenantId }, 'qualifications');
    const input = parse(qualificationBodySchema, req.body, 'qualification');
    res.status(201).json(await withTenant(sequelize, actor.tenantId, () => admin.createQualification(sequelize, actor.tenantId, input)));
  });

  router.post('/invitations', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'create', 'Invitation', { tenantId: actor.tenantId }, 'invitations');
    const input = parse(inviteInputSchema, req.body, 'invitation');
    await invite(deps, actor.tenantId, actor.userId, input);
    res.status(202).json({ ok: true, email: input.email });
  });

  return router;
}

