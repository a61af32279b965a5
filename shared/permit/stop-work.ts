/**
 * Stop-work rules (written once for the lifecycle guards, the screens and the scheduler):
 *
 * - A vent or plug check that found a problem stays unresolved until a later check of the same kind
 *   at the same place (that vent or plug, or all of them) finds it right again. Work does not start
 *   or resume over an unresolved failed check; a live permit is suspended when one is recorded.
 * - A plug left overnight (the site's calendar day changed since its last passing check, or since it
 *   was built when it has never been checked) is checked again before work starts or resumes.
 *   Common practice, no published source: bentonite dries and shrinks from the pipe wall.
 * - Gas verdicts per place: a fail at one place is cleared only by a later pass at the same place,
 *   and work starts or resumes only with a pass, within the permit's window, at every place its
 *   regime requires: the work area always, and inside the pipe on each side of the work where the
 *   pipe is held open behind a plug.
 */
import type { GasTestPlace } from '../schemas/gas-tests.schema';
import { siteDay, formatInZone } from '../time/zone';
import type { WorkSide } from '../isolations/readiness';

/** The latest passing and failing test at one place. */
export interface GasPlaceFacts {
  place: GasTestPlace;
  lastPassAt: Date | null;
  lastFailAt: Date | null;
}

export interface StopWorkFacts {
  timeZone: string;
  /** Unresolved failed vent and plug checks, each in words ("Plug check of TEST-PL-1 at 2 Dec, 14:05 CST: plug face cracked"). */
  failedChecks: string[];
  /** While plugs are in place: the last passing plug check, or when the first plug in place was built if none. */
  plugsCheckedAt: Date | null;
  plugsInPlace: number;
  /** Sides of the work on which a plug holds the open pipe. */
  plugSides: WorkSide[];
  gasPlaces: GasPlaceFacts[];
  /** The last fire-watch check that found the area clear. */
  fireWatchClearAt: Date | null;
}

const insidePipe: Record<WorkSide, GasTestPlace> = { upstream: 'inside_pipe_upstream', downstream: 'inside_pipe_downstream' };

/** The places a passing gas test is needed at before work starts or resumes. */
export function requiredGasPlaces(plugSides: readonly WorkSide[]): GasTestPlace[] {
  return [...(['upstream', 'downstream'] as const).filter((s) => plugSides.includes(s)).map((s) => insidePipe[s]), 'work_area'];
}

/** "at the work area", "inside the pipe, upstream of the plug": a place as words follow "gas test". */
export const gasPlacePhrase: Record<GasTestPlace, string> = {
  inside_pipe_upstream: 'inside the pipe, upstream of the plug,',
  inside_pipe_downstream: 'inside the pipe, downstream of the plug,',
  work_area: 'at the work area',
  vent_outlet: 'at the vent outlet',
  other: 'at the other place named',
};
const placeName = (place: GasTestPlace) => gasPlacePhrase[place];

/** Places whose latest test failed (a fail at the same minute as a pass counts as the latest). */
export function unresolvedGasPlaces(places: readonly GasPlaceFacts[]): GasTestPlace[] {
  return places.filter((p) => p.lastFailAt && (!p.lastPassAt || p.lastFailAt >= p.lastPassAt)).map((p) => p.place);
}

/** Every reason the stop-work rules keep work from starting or resuming now. */
export function stopWorkGaps(f: StopWorkFacts, windowMinutes: number, now: Date, opts: { skipGasFail?: boolean; skipGasAge?: boolean } = {}): string[] {
  const r: string[] = [];
  for (const c of f.failedChecks) r.push(`${c}. Check it again and record it as right before work goes on.`);
  if (f.plugsInPlace > 0 && f.plugsCheckedAt && siteDay(f.plugsCheckedAt, f.timeZone) !== siteDay(now, f.timeZone))
    r.push(`The plugs have been in overnight (last checked ${formatInZone(f.plugsCheckedAt, f.timeZone)}); check them again today before work starts or resumes.`);
  if (!opts.skipGasFail)
    for (const place of unresolvedGasPlaces(f.gasPlaces)) r.push(`The latest gas test ${placeName(place)} failed; record a passing test at the same place first.`);
  if (!opts.skipGasAge)
    for (const place of requiredGasPlaces(f.plugSides)) {
      const last = f.gasPlaces.find((p) => p.place === place)?.lastPassAt ?? null;
      if (!last || now.getTime() - last.getTime() > windowMinutes * 60_000)
        r.push(`Record a passing gas test ${placeName(place)} within ${windowMinutes} minutes of starting.`);
    }
  return r;
}

/** The hand-back rule of the fire watch: a clear closing check made once the watch time is over. */
export function fireWatchCloseGap(endsAt: Date | null, clearAt: Date | null, now: Date, timeZone: string): string | null {
  if (!endsAt || endsAt > now) return null;
  if (clearAt && clearAt >= endsAt) return null;
  return `Record the fire watch closing check (area clear, nothing smouldering), made after the watch ended at ${formatInZone(endsAt, timeZone)}.`;
}
