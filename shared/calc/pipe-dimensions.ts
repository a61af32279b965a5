/**
 * Looks up a steel pipe's outside diameter, wall and inside diameter from the ASME B36.10M
 * table in ./pipe-table. ID = OD − 2 × wall.
 */
import { B36_SCHEDULES, PIPE_TABLE, type B36Schedule, type PipeTableRow } from './pipe-table';
import { CalcInputError, requireNumber } from './units';

export interface PipeDimensions {
  odIn: number;
  wallIn: number;
  idIn: number;
}

export interface PipeSizeOption extends PipeDimensions {
  nps: number;
  label: string;
  schedule: B36Schedule;
}

/**
 * Bounds on any diameter a calculation accepts. Nothing Holdpoint isolates is smaller than 1/8-in
 * pipe (bore ≈ 0.27 in) or larger than 60 in; outside that, a slip (mm typed as inches, a missing
 * decimal point) is far likelier than a real pipe.
 */
export const MIN_PIPE_DIAMETER_IN = 0.1;
export const MAX_PIPE_DIAMETER_IN = 60;

/** Schedules may arrive as numbers from forms or older records; 40 and "40" mean the same wall. */
export type PipeScheduleInput = B36Schedule | number;

// Sizes are binary fractions (0.5, 0.75, 1.25 …) and so compare exactly, but a size typed as
// 1.2500000001 by a unit conversion should still find its row.
const NPS_TOLERANCE = 1e-6;

/** "STD", "XS", "XXS" as they are; numbered schedules as "Sch 40". */
export function scheduleLabel(schedule: B36Schedule): string {
  return /^\d+$/.test(schedule) ? `Sch ${schedule}` : schedule;
}

function toSchedule(schedule: unknown): B36Schedule {
  const text = typeof schedule === 'number' ? String(schedule) : schedule;
  const match = B36_SCHEDULES.find((s) => s === text);
  if (!match) {
    throw new CalcInputError(
      'schedule',
      `Pipe schedule "${String(schedule)}" is not one ASME B36.10M lists; choose ${B36_SCHEDULES.map(scheduleLabel).join(', ')}.`,
    );
  }
  return match;
}

function findRow(nps: number): PipeTableRow | undefined {
  return PIPE_TABLE.find((row) => Math.abs(row.nps - nps) < NPS_TOLERANCE);
}

function dimensionsOf(row: PipeTableRow, wallIn: number): PipeDimensions {
  return { odIn: row.odIn, wallIn, idIn: row.odIn - 2 * wallIn };
}

function sizesWithWall(schedule: B36Schedule): readonly number[] {
  return Object.freeze(PIPE_TABLE.filter((row) => row.wallIn[schedule] !== undefined).map((row) => row.nps));
}

export function pipeDimensions(nps: number, schedule: PipeScheduleInput): PipeDimensions {
  requireNumber('nps', nps, { label: 'nominal pipe size', min: 0, minExclusive: true });
  const sch = toSchedule(schedule);
  const row = findRow(nps);
  if (!row) {
    const sizes = PIPE_TABLE.map((r) => r.label).join(', ');
    throw new CalcInputError(
      'nps',
      `NPS ${nps} is not a standard pipe size in Holdpoint's table. Listed sizes: ${sizes}.`,
    );
  }
  const wallIn = row.wallIn[sch];
  if (wallIn === undefined) {
    const offered = B36_SCHEDULES.filter((s) => row.wallIn[s] !== undefined).map(scheduleLabel);
    throw new CalcInputError(
      'schedule',
      `${scheduleLabel(sch)} is not listed for NPS ${row.label} in ASME B36.10M; ` +
        `for this size choose ${offered.join(', ')}, or enter the measured inside diameter.`,
    );
  }
  return dimensionsOf(row, wallIn);
}

/** Sizes that have a wall in each schedule, smallest first, for pickers. */
export const PIPE_SIZES_BY_SCHEDULE: Readonly<Record<B36Schedule, readonly number[]>> = Object.freeze(
  Object.fromEntries(B36_SCHEDULES.map((s) => [s, sizesWithWall(s)])) as Record<B36Schedule, readonly number[]>,
);

/** Every size listed in a schedule with its label and dimensions, smallest first, for pickers. */
export function pipeSizeOptions(schedule: PipeScheduleInput): PipeSizeOption[] {
  const sch = toSchedule(schedule);
  return PIPE_TABLE.flatMap((row) => {
    const wallIn = row.wallIn[sch];
    return wallIn === undefined ? [] : [{ nps: row.nps, label: row.label, schedule: sch, ...dimensionsOf(row, wallIn) }];
  });
}
