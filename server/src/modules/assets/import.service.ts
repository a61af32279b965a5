// CSV import and export of the asset register (pipelines, their sites, isolation points).
import { QueryTypes, type Sequelize } from 'sequelize';
import { toCsv, type CsvParser } from '@shared/csv/csv';
import { parseCsv } from '@shared/csv/read-csv';
import { assetCsvColumns, pipelineRow, pointRow, siteRow } from '@shared/assets/asset-csv';
import { planAssetImport, summarise, type ImportSnapshot } from '@shared/assets/import-plan';
import type { ImportReport } from '@shared/assets/types';
import { AppError } from '../../errors/app-error';
import { auditAsset, type AssetContext } from './asset-context';
import { findPipelineRow, insertPipelineRow, sitesOf, updatePipelineRow, upsertSite } from './pipelines.service';
import { insertPointRow, pointsOfPipeline, updatePointRow } from './points.service';

async function loadSnapshot(sequelize: Sequelize, tenantId: string): Promise<ImportSnapshot> {
  // Locked so nobody changes the register between the check and the write.
  const pipelines = await sequelize.query<ImportSnapshot['pipelines'][number]>(
    `SELECT id, code, start_position::float8 AS "startPosition", end_position::float8 AS "endPosition" FROM pipelines WHERE tenant_id = :tenantId ORDER BY code FOR UPDATE`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  const sites = await sequelize.query<ImportSnapshot['sites'][number]>(
    `SELECT p.code AS "pipelineCode", s.name, s.position::float8 AS position FROM pipeline_sites s JOIN pipelines p ON p.tenant_id = s.tenant_id AND p.id = s.pipeline_id WHERE s.tenant_id = :tenantId`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  const points = await sequelize.query<ImportSnapshot['points'][number]>(
    `SELECT ip.id, ip.tag_code AS "tagCode", p.code AS "pipelineCode", ip.position::float8 AS position
     FROM isolation_points ip JOIN pipelines p ON p.tenant_id = ip.tenant_id AND p.id = ip.pipeline_id WHERE ip.tenant_id = :tenantId`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  return { pipelines, sites, points };
}

/**
 * Checks the whole file and, unless it is a dry run, writes it, all in the caller's one transaction.
 * A file with any issue writes nothing: a dry run reports the issues, a real run refuses with 400.
 */
export async function importAssets(ctx: AssetContext, csv: string, dryRun: boolean, parser: CsvParser = parseCsv): Promise<ImportReport> {
  const { sequelize, tenantId } = ctx;
  const snapshot = await loadSnapshot(sequelize, tenantId);
  const { issues, plan, rows } = planAssetImport(parser(csv), snapshot);
  if (dryRun) return summarise(plan, issues, rows, false);
  if (issues.length) {
    const report = summarise(plan, issues, rows, false);
    throw new AppError(
      'validation_failed',
      `The file has ${issues.length} problem${issues.length === 1 ? '' : 's'}; nothing was imported.`,
      issues.map((i) => ({ path: i.column ? `row ${i.row}.${i.column}` : `row ${i.row}`, message: i.message })),
      { report },
    );
  }

  const pipelineIds = new Map(snapshot.pipelines.map((p) => [p.code, p.id]));
  for (const p of plan.pipelines) {
    if (p.id) await updatePipelineRow(sequelize, tenantId, p.id, p.input);
    else pipelineIds.set(p.input.code, await insertPipelineRow(sequelize, tenantId, p.input));
  }
  for (const s of plan.sites) await upsertSite(sequelize, tenantId, pipelineIds.get(s.pipelineCode)!, s.input);
  for (const p of plan.points) {
    if (p.id) await updatePointRow(sequelize, tenantId, p.id, p.input);
    else await insertPointRow(sequelize, tenantId, pipelineIds.get(p.pipelineCode)!, p.input);
  }
  const report = summarise(plan, issues, rows, true);
  await auditAsset(ctx, {
    entityType: 'asset_import',
    entityId: tenantId,
    action: 'imported',
    data: { rows, pipelines: report.pipelines, sites: report.sites, points: report.points },
  });
  return report;
}

/** The register as one CSV in the import layout: each pipeline, then its sites, then its points. */
export async function exportAssets(sequelize: Sequelize, tenantId: string, pipelineId?: string): Promise<string> {
  const ids = await sequelize.query<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :tenantId AND (CAST(:pipelineId AS uuid) IS NULL OR id = CAST(:pipelineId AS uuid)) ORDER BY code`, {
    replacements: { tenantId, pipelineId: pipelineId ?? null },
    type: QueryTypes.SELECT,
  });
  const lines: ReturnType<typeof pipelineRow>[] = [[...assetCsvColumns]];
  for (const { id } of ids) {
    const row = (await findPipelineRow(sequelize, tenantId, id))!;
    lines.push(pipelineRow(row));
    for (const s of await sitesOf(sequelize, tenantId, id)) lines.push(siteRow(row.code, s));
    for (const p of await pointsOfPipeline(sequelize, tenantId, id)) lines.push(pointRow(p));
  }
  return toCsv(lines);
}
