// The register's CSV as the routes see it: rights checked, then one tenant transaction around the import or export.
import { withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { AssetContext } from './asset-context';
import { exportAssets, importAssets } from './import.service';

export async function importRegisterCsv(ctx: AssetContext, csv: string, dryRun: boolean) {
  // An import both adds and changes records.
  for (const action of ['create', 'update'] as const) {
    authorizeType(ctx.ability, action, 'Pipeline', { tenantId: ctx.tenantId }, 'pipelines');
    authorizeType(ctx.ability, action, 'IsolationPoint', { tenantId: ctx.tenantId }, 'isolation points');
  }
  return withTenant(ctx.sequelize, ctx.tenantId, () => importAssets(ctx, csv, dryRun));
}

export async function exportRegisterCsv(ctx: AssetContext, pipelineId?: string) {
  authorizeType(ctx.ability, 'read', 'Pipeline', { tenantId: ctx.tenantId }, 'pipelines');
  authorizeType(ctx.ability, 'read', 'IsolationPoint', { tenantId: ctx.tenantId }, 'isolation points');
  return withTenant(ctx.sequelize, ctx.tenantId, () => exportAssets(ctx.sequelize, ctx.tenantId, pipelineId));
}
