/**
 * The isolated section of a plan: the stretch of line between the innermost line-isolating device on
 * each side of the work (HSE HSG253, common practice: vents and drains bleed and prove the section
 * that the isolations enclose; a mud plug seals vapour inside it). A vent, drain or plug chosen
 * outside that stretch works on line that is still live, so the plan screen and the proposal warn.
 */
import type { WorkRange } from './readiness';
import { closesLine } from './readiness';

export interface SectionPoint {
  label: string;
  kind: string;
  position: number;
}

const kindWords: Record<string, string> = { vent: 'vent', drain: 'drain', plug: 'plug' };

/** The innermost line-isolating device on each side of the work, or null where the plan has none on that side. */
export function sectionBounds<P extends SectionPoint>(points: readonly P[], range: WorkRange): { upstream: P | null; downstream: P | null } {
  const devices = points.filter((p) => closesLine(p.kind));
  const upstream = devices.filter((p) => p.position <= range.from).sort((a, b) => b.position - a.position)[0] ?? null;
  const downstream = devices.filter((p) => p.position >= range.to).sort((a, b) => a.position - b.position)[0] ?? null;
  return { upstream, downstream };
}

/** Vents, drains and plugs of the plan that lie beyond an isolating device, outside the section, each with a warning in plain words. */
export function pointsOutsideSection<P extends SectionPoint>(points: readonly P[], range: WorkRange): { point: P; message: string }[] {
  const { upstream, downstream } = sectionBounds(points, range);
  return points.flatMap((p) => {
    const what = kindWords[p.kind];
    if (!what) return [];
    const beyond = upstream && p.position < upstream.position ? upstream : downstream && p.position > downstream.position ? downstream : null;
    if (!beyond) return [];
    return [
      {
        point: p,
        message: `${p.label} (${what}) lies outside the isolated section, beyond ${beyond.label}: it is on line that is still live, so it does not ${
          p.kind === 'plug' ? 'seal the section being worked on' : 'bleed or prove the section being worked on'
        }. Choose one between the isolations.`,
      },
    ];
  });
}
