// The Settings page: the tenant admin reads and changes the site's settings. Each exported function
// checks the caller's rights and runs in one tenant transaction; a change and its audit event commit together.
import { QueryTypes, type Sequelize } from 'sequelize';
import { readTenantSettings, tenantSettingsSchema } from '@shared/schemas/tenant-settings.schema';
import { HOT_WORK_REASON_MESSAGE, NFPA_FIRE_WATCH_MESSAGE, type TenantSettingsInput } from '@shared/schemas/tenant-settings-input.schema';
import { applySettingsInput, settingChanges, weakenedMargins, type SettingKey } from '@shared/tenant-settings/settings-changes';
import type { TenantSettingsView } from '@shared/types/tenant-settings';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeType } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { appendAudit } from '../audit/audit.service';

interface TenantRow {
  settings: unknown;
  time_zone: string;
}

async function tenantRow(sequelize: Sequelize, tenantId: string, forUpdate: boolean): Promise<TenantRow> {
  const [row] = await sequelize.query<TenantRow>(`SELECT settings, time_zone FROM tenants WHERE id = :tenantId${forUpdate ? ' FOR UPDATE' : ''}`, {
    replacements: { tenantId },
    type: QueryTypes.SELECT,
  });
  if (!row) throw AppError.notFound('tenant');
  return row;
}

function viewOf(row: TenantRow): TenantSettingsView {
  const s = readTenantSettings(row.settings);
  return {
    timeZone: row.time_zone,
    recordsEmail: s.recordsEmail ?? null,
    auditCheckpointHours: s.auditCheckpointHours,
    isolationRecheckHours: s.isolationRecheckHours,
    maxPermitHours: s.maxPermitHours,
    gasTestIntervalMinutes: s.gasTestIntervalMinutes,
    gasTestOverdueGraceMinutes: s.gasTestOverdueGraceMinutes,
    requireDailyBumpTest: s.requireDailyBumpTest,
    fireWatchBasis: s.fireWatchBasis,
    fireWatchMinutes: s.fireWatchMinutes,
    hotWorkLelPct: s.hotWorkLelPct,
    hotWorkLelReason: s.hotWorkLelReason?.trim() || null,
  };
}

export async function getTenantSettings(deps: AppDeps, caller: CallerContext): Promise<TenantSettingsView> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'TenantSettings', { tenantId }, 'the site settings');
  return withTenant(deps.sequelize, tenantId, async () => viewOf(await tenantRow(deps.sequelize, tenantId, false)));
}

/** The rules between settings, judged on the settings as they would be stored, for the fields this change touches. */
function refuseInconsistent(after: TenantSettingsView, touched: (k: SettingKey) => boolean) {
  const details: { path: string; message: string }[] = [];
  if ((touched('fireWatchBasis') || touched('fireWatchMinutes')) && after.fireWatchBasis === 'nfpa_51b_2019' && after.fireWatchMinutes < 60)
    details.push({ path: 'fireWatchMinutes', message: NFPA_FIRE_WATCH_MESSAGE });
  if ((touched('hotWorkLelPct') || touched('hotWorkLelReason')) && after.hotWorkLelPct > 0 && !after.hotWorkLelReason)
    details.push({ path: 'hotWorkLelReason', message: HOT_WORK_REASON_MESSAGE });
  if (details.length) throw AppError.validation('Some settings do not fit together.', details);
}

/**
 * Changes the settings sent, under a lock on the tenant's row. A change that weakens a safety margin
 * needs a reason; the audit event keeps each setting before and after in words, and the reason.
 */
export async function changeTenantSettings(deps: AppDeps, caller: CallerContext, input: TenantSettingsInput): Promise<TenantSettingsView> {
  const { sequelize } = deps;
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'update', 'TenantSettings', { tenantId }, 'the site settings');
  return withTenant(sequelize, tenantId, async () => {
    const row = await tenantRow(sequelize, tenantId, true);
    const before = viewOf(row);
    const after = applySettingsInput(before, input);
    refuseInconsistent(after, (k) => input[k] !== undefined);
    const changes = settingChanges(before, after);
    if (!changes.length) return before;
    const weakened = weakenedMargins(before, after);
    if (weakened.length && !input.reason)
      throw AppError.validation('This change weakens a safety margin, so it needs a reason.', [
        { path: 'reason', message: `Say why: ${weakened.map((w) => w.words).join('; ')}.` },
      ]);

    const jsonKeys = changes.map((c) => c.key).filter((k) => k !== 'timeZone');
    const set = Object.fromEntries(jsonKeys.filter((k) => after[k] !== null).map((k) => [k, after[k]]));
    const remove = jsonKeys.filter((k) => after[k] === null);
    // The stored document also holds other features' keys; only the changed ones are written.
    const stored = { ...(row.settings && typeof row.settings === 'object' ? row.settings : {}), ...set } as Record<string, unknown>;
    for (const k of remove) delete stored[k];
    const check = tenantSettingsSchema.safeParse(stored);
    if (!check.success) throw AppError.validation('Some settings are not valid.', check.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message })));

    await sequelize.query(
      `UPDATE tenants SET settings = (coalesce(settings, '{}'::jsonb) || CAST(:set AS jsonb)) - CAST(:remove AS text[]), time_zone = :timeZone WHERE id = :tenantId`,
      { replacements: { tenantId, set: JSON.stringify(set), remove: `{${remove.join(',')}}`, timeZone: after.timeZone } },
    );
    await appendAudit(sequelize, {
      tenantId,
      entityType: 'tenant',
      entityId: tenantId,
      action: 'settings_changed',
      actor: auditActor(caller, 'settings_changed'),
      reason: input.reason || null,
      ip: caller.ip ?? null,
      data: Object.fromEntries(changes.map((c) => [c.label, `${c.from} → ${c.to}`])),
      occurredAt: deps.clock.now(),
    });
    return after;
  });
}
