/**
 * The atmosphere limits a permit's gas tests are judged against: the tenant's limits (published
 * limits, tightened by tenant policy; see docs/calculations.md), tightened again by the permit.
 * A permit may tighten, never loosen.
 */
import { GASES, tightenLimits, type AssessOptions, type AtmosphereLimits, type Gas, type LimitKey, type LimitRequest } from '../calc/atmosphere';
import type { WorkKind } from '../permit/states';

export type PermitLimitRequest = Omit<LimitRequest, 'source'>;

const KEYS: readonly LimitKey[] = ['o2', 'lel', 'hotWorkLel', 'h2s', 'co'];

/** Every gas of a four-gas monitor is read on every test, so every one must be measured for a pass. */
export const REQUIRED_GASES: readonly Gas[] = GASES;

/** Hot-work permits are judged against the hot-work flammable limit on every test. */
export function assessOptionsFor(kinds: readonly WorkKind[]): AssessOptions {
  return { hotWork: kinds.includes('hot_work'), required: REQUIRED_GASES };
}

/**
 * The effective limits. A stored permit value looser than the tenant's current one (the tenant
 * tightened its policy later) is held at the tenant's, so this never throws and never loosens.
 */
export function permitLimits(tenant: AtmosphereLimits, request: PermitLimitRequest | null | undefined, permitNumber: string): AtmosphereLimits {
  if (!request) return tenant;
  const clamped: LimitRequest = { source: `Permit ${permitNumber}` };
  for (const key of KEYS) {
    const asked = request[key] as { min?: number; max?: number } | undefined;
    if (!asked) continue;
    const floor = tenant[key] as { min?: number; max?: number };
    const change: { min?: number; max?: number } = {};
    if (asked.min !== undefined && key === 'o2') change.min = Math.max(asked.min, floor.min ?? asked.min);
    if (asked.max !== undefined) change.max = Math.min(asked.max, floor.max ?? asked.max);
    if (change.min !== undefined && change.max !== undefined && change.min > change.max) continue;
    (clamped as Record<string, unknown>)[key] = change;
  }
  return tightenLimits(tenant, clamped, { floor: tenant });
}

/**
 * Checks a new permit request before it is stored: the result may be no looser than `current`
 * (the tenant's limits for a draft, the permit's present limits once it is issued). Throws
 * CalcInputError naming the field otherwise.
 */
export function checkPermitLimitRequest(tenant: AtmosphereLimits, current: AtmosphereLimits, request: PermitLimitRequest, permitNumber: string): AtmosphereLimits {
  return tightenLimits(tenant, { ...request, source: `Permit ${permitNumber}` }, { floor: current });
}
