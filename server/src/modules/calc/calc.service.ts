import type { Sequelize } from 'sequelize';
import {
  MUD_PLUG_CAUTION,
  B36_SCHEDULES,
  assessAtmosphere,
  lineFill,
  mudPlug,
  pipeDimensions,
  pipeSizeOptions,
  scheduleLabel,
  type AtmosphereAssessment,
  type AtmosphereLimits,
  type LineFill,
  type PipeDimensions,
} from '@shared/calc';
import type { AtmosphereRequest, LineFillQuery, MudPlugQuery, PipeQuery } from '@shared/schemas/calc.schema';
import type { MudPlugResponse, PipeSizesResponse } from '@shared/types/calc';
import { withTenant } from '../../db/sequelize';
import { tenantAtmosphereLimits } from '../../lib/atmosphere-limits';

export function mudPlugFor(q: MudPlugQuery): MudPlugResponse {
  return {
    ...mudPlug(q),
    caution: MUD_PLUG_CAUTION,
    basis: { diameterIn: q.diameterIn, waterFraction: q.waterFraction, source: 'common practice, no published source' },
  };
}

export const pipeFor = (q: PipeQuery): PipeDimensions => pipeDimensions(q.nps, q.schedule);

export const lineFillFor = (q: LineFillQuery): LineFill => lineFill(q);

export function pipeSizes(): PipeSizesResponse {
  return {
    source: 'ASME B36.10M-2004, Table 1',
    schedules: B36_SCHEDULES.map((schedule) => ({
      schedule,
      label: scheduleLabel(schedule),
      sizes: pipeSizeOptions(schedule),
    })),
  };
}

export function assessWith(limits: AtmosphereLimits, input: AtmosphereRequest): AtmosphereAssessment {
  return assessAtmosphere(input.readings, limits, { hotWork: input.hotWork });
}

/** Assesses the readings against the tenant's limits, read in the tenant's own transaction; `ignored` names stored limits left out. */
export async function assessForTenant(sequelize: Sequelize, tenantId: string, input: AtmosphereRequest) {
  const { limits, ignored } = await withTenant(sequelize, tenantId, () => tenantAtmosphereLimits(sequelize, tenantId));
  return { assessment: assessWith(limits, input), ignored };
}
