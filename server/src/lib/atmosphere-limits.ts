import { QueryTypes, type Sequelize } from 'sequelize';
import { CalcInputError, DEFAULT_ATMOSPHERE_LIMITS, tightenLimits, type AtmosphereLimits, type LimitKey } from '@shared/calc';
import { tenantAtmosphereSettingsSchema } from '@shared/schemas/calc.schema';

export const TENANT_LIMIT_SOURCE = 'Tenant policy';

export interface IgnoredLimit {
  key: LimitKey;
  reason: string;
}

type LimitChange = { min?: number; max?: number };

const UNEXPLAINED_RAISE = 'raised above 0 %LEL without a stated reason (hotWorkLelReason), so 0 %LEL stays';

const limitShapes = tenantAtmosphereSettingsSchema.shape.atmosphereLimits.unwrap().shape;
const LIMIT_KEYS = Object.keys(limitShapes) as LimitKey[];

/**
 * The tenant's gas-test limits from tenants.settings, on top of the defaults. Each stored limit is
 * applied on its own: one that is malformed or looser than the published limit is left out (the
 * default for that gas stays, which is never looser) and reported, so a single bad entry cannot
 * stop every gas test in the tenant or loosen anything.
 */
export function limitsFromSettings(settings: unknown): { limits: AtmosphereLimits; ignored: IgnoredLimit[] } {
  const raw = (settings && typeof settings === 'object' ? settings : {}) as Record<string, unknown>;
  const stored = (raw.atmosphereLimits && typeof raw.atmosphereLimits === 'object' ? raw.atmosphereLimits : {}) as Record<string, unknown>;
  const changes: [LimitKey, LimitChange][] = [];
  const ignored: IgnoredLimit[] = [];

  for (const key of LIMIT_KEYS) {
    if (stored[key] === undefined) continue;
    const parsed = limitShapes[key].safeParse(stored[key]);
    if (parsed.success && parsed.data) changes.push([key, parsed.data]);
    else ignored.push({ key, reason: 'not a limit of the form { min?, max? } in numbers' });
  }
  // The hot-work limit is raised above its 0 %LEL default only with a stated reason, which travels with the limit as its source.
  const lelReason = typeof raw.hotWorkLelReason === 'string' ? raw.hotWorkLelReason.trim() : '';
  const hotWorkSource = lelReason ? `${TENANT_LIMIT_SOURCE}, reason given: ${lelReason}` : TENANT_LIMIT_SOURCE;
  const unexplained = (max: number | undefined) => max !== undefined && max > DEFAULT_ATMOSPHERE_LIMITS.hotWorkLel.max && !lelReason;
  const stored0 = changes.find(([key]) => key === 'hotWorkLel');
  if (stored0 && unexplained(stored0[1].max)) {
    changes.splice(changes.indexOf(stored0), 1);
    ignored.push({ key: 'hotWorkLel', reason: UNEXPLAINED_RAISE });
  }
  if (raw.hotWorkLelPct !== undefined) {
    const parsed = tenantAtmosphereSettingsSchema.shape.hotWorkLelPct.safeParse(raw.hotWorkLelPct);
    if (!parsed.success || parsed.data === undefined) ignored.push({ key: 'hotWorkLel', reason: 'hotWorkLelPct is not a number' });
    else if (unexplained(parsed.data)) ignored.push({ key: 'hotWorkLel', reason: UNEXPLAINED_RAISE });
    else {
      // Two places may set the hot-work limit; the stricter one counts.
      const other = changes.find(([key]) => key === 'hotWorkLel');
      if (!other) changes.push(['hotWorkLel', { max: parsed.data }]);
      else other[1] = { max: Math.min(parsed.data, other[1].max ?? parsed.data) };
    }
  }

  let limits = tightenLimits(DEFAULT_ATMOSPHERE_LIMITS, {});
  for (const [key, change] of changes) {
    try {
      limits = tightenLimits(limits, { [key]: change, source: key === 'hotWorkLel' ? hotWorkSource : TENANT_LIMIT_SOURCE });
    } catch (err) {
      if (!(err instanceof CalcInputError)) throw err;
      ignored.push({ key, reason: err.message });
    }
  }
  return { limits, ignored };
}

/** Call inside withTenant: the tenant's limits, with any stored limit that was left out. */
export async function tenantAtmosphereLimits(sequelize: Sequelize, tenantId: string) {
  const rows = await sequelize.query<{ settings: unknown }>(`SELECT settings FROM tenants WHERE id = :tenantId`, {
    replacements: { tenantId },
    type: QueryTypes.SELECT,
  });
  return limitsFromSettings(rows[0]?.settings);
}
