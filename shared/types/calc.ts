import type { AtmosphereAssessment, B36Schedule, MudPlug, PipeSizeOption } from '../calc';

// What the calculator API answers, written once for the server and the client.

/** GET /api/calc/mud-plug. */
export interface MudPlugResponse extends MudPlug {
  /** MUD_PLUG_CAUTION: shown beside every plug figure. */
  caution: string;
  basis: { diameterIn: number; waterFraction: number; source: string };
}

/** GET /api/calc/pipe-sizes. */
export interface PipeSizesResponse {
  source: string;
  schedules: { schedule: B36Schedule; label: string; sizes: PipeSizeOption[] }[];
}

/** POST /api/calc/atmosphere. */
export type AtmosphereResponse = AtmosphereAssessment;
