// The site's settings.
//   GET    /api/tenant/settings    tenant admin
//   PATCH  /api/tenant/settings    tenant admin (a change that weakens a safety margin needs a reason)
import { Router, type Request } from 'express';
import { tenantSettingsInputSchema } from '@shared/schemas/tenant-settings-input.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import * as settings from './tenant-settings.service';

export function createTenantSettingsRouter(deps: AppDeps) {
  const router = Router();
  router.use('/tenant/settings', requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });

  router.get('/tenant/settings', async (req, res) => {
    res.json(await settings.getTenantSettings(deps, caller(req)));
  });

  router.patch('/tenant/settings', async (req, res) => {
    const c = caller(req);
    const input = parse(tenantSettingsInputSchema, req.body, 'settings');
    const changed = await settings.changeTenantSettings(deps, c, input);
    req.log.info({ event: 'tenant_settings_changed', by: c.actor.userId }, 'tenant settings changed');
    res.json(changed);
  });

  return router;
}
