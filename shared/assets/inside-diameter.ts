/**
 * Which inside diameter a pipeline record carries, and where it came from. Precedence: a measured
 * (explicit) bore first, then OD − 2 × the given wall, then the schedule's wall from ASME B36.10M.
 * The OD always comes from the same table (shared/calc/pipe-table).
 */
import { MAX_PIPE_DIAMETER_IN, MIN_PIPE_DIAMETER_IN, pipeDimensions } from '../calc/pipe-dimensions';
import { PIPE_TABLE, type PipeSchedule } from '../calc/pipe-table';
import { CalcInputError } from '../calc/units';

export type InsideDiameterSource = 'schedule' | 'wall' | 'explicit';

export interface InsideDiameterInput {
  nps: number;
  schedule?: PipeSchedule | null;
  wallThicknessIn?: number | null;
  insideDiameterIn?: number | null;
}

export interface ResolvedInsideDiameter {
  idIn: number;
  odIn: number | null;
  source: InsideDiameterSource;
}

// Walls in the table have three decimals; a typed wall that agrees to half a thousandth agrees.
const WALL_TOLERANCE_IN = 0.0005;

/** The table's outside diameter for a nominal size, or null for a size the table does not list. */
export const outsideDiameter = (nps: number): number | null => PIPE_TABLE.find((r) => Math.abs(r.nps - nps) < 1e-6)?.odIn ?? null;

/** Throws CalcInputError naming the field (nps, schedule, wallThicknessIn, insideDiameterIn) the person must fix. */
export function resolveInsideDiameter(input: InsideDiameterInput): ResolvedInsideDiameter {
  const odIn = outsideDiameter(input.nps);
  const { schedule, wallThicknessIn: wall, insideDiameterIn: explicit } = input;

  if (schedule && wall != null && odIn !== null) {
    const tableWall = pipeDimensions(input.nps, schedule).wallIn;
    if (Math.abs(tableWall - wall) > WALL_TOLERANCE_IN) {
      throw new CalcInputError(
        'wallThicknessIn',
        `The ${schedule === 'STD' || schedule === 'XS' ? schedule : `Sch ${schedule}`} wall for NPS ${input.nps} is ${tableWall} in, not ${wall} in. Leave one of them empty or make them agree.`,
      );
    }
  }

  if (explicit != null) {
    if (explicit < MIN_PIPE_DIAMETER_IN || explicit > MAX_PIPE_DIAMETER_IN) {
      throw new CalcInputError('insideDiameterIn', `The inside diameter must be between ${MIN_PIPE_DIAMETER_IN} and ${MAX_PIPE_DIAMETER_IN} in (got ${explicit} in).`);
    }
    if (odIn !== null && explicit >= odIn) {
      throw new CalcInputError('insideDiameterIn', `The inside diameter (${explicit} in) must be smaller than the outside diameter of NPS ${input.nps} (${odIn} in).`);
    }
    return { idIn: explicit, odIn, source: 'explicit' };
  }

  if (wall != null) {
    if (odIn === null) {
      throw new CalcInputError('nps', `NPS ${input.nps} is not in Holdpoint's pipe table, so a wall thickness cannot give the bore; enter the measured inside diameter.`);
    }
    const idIn = odIn - 2 * wall;
    if (idIn < MIN_PIPE_DIAMETER_IN) {
      throw new CalcInputError('wallThicknessIn', `A ${wall} in wall leaves no bore in NPS ${input.nps} (OD ${odIn} in).`);
    }
    return { idIn, odIn, source: 'wall' };
  }

  if (schedule) return { idIn: pipeDimensions(input.nps, schedule).idIn, odIn, source: 'schedule' };

  throw new CalcInputError('schedule', 'Give the schedule, the wall thickness or the measured inside diameter, so the bore is known.');
}
