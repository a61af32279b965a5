import { formatPosition } from '@shared/assets/format';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { formatInZone } from '@shared/time/zone';
import type { PlanOverlap, PlanPermit } from '@shared/types/plan';

/** One meeting of two permits, as the morning meeting reads it out. */
export function overlapWords(o: PlanOverlap, unit: LocationUnit, timeZone: string): string {
  const who = `${o.first.number} (${o.first.contractorName}) and ${o.second.number} (${o.second.contractorName})`;
  const when = `from ${formatInZone(o.from, timeZone, 'dayTime')} to ${formatInZone(o.to, timeZone, 'dayTime')}`;
  if (o.kind === 'shared_point') return `${who} both isolate ${o.pointLabel ?? 'the same point'} at ${formatPosition(o.fromPosition, unit)} on ${o.pipelineName}, ${when}.`;
  const where = o.fromPosition === o.toPosition ? `at ${formatPosition(o.fromPosition, unit)}` : `between ${formatPosition(o.fromPosition, unit)} and ${formatPosition(o.toPosition, unit, false)}`;
  return `${who} both work ${where} on ${o.pipelineName}, ${when}.`;
}

/** "1 place", "1,003,168 places": a count with its word, the thousands grouped for reading aloud. */
export function countWords(n: number, word: string): string {
  return `${n.toLocaleString('en-GB')} ${word}${n === 1 ? '' : 's'}`;
}

/** The marks a permit carries on the timeline, in words (never colour alone). */
export function permitFlags(p: PlanPermit): string[] {
  const flags: string[] = [];
  if (p.workOverlaps) flags.push(`Overlaps ${p.workOverlaps} other permit${p.workOverlaps === 1 ? '' : 's'}`);
  if (p.sharedPoints) flags.push(`Shares isolation points with ${p.sharedPoints} other permit${p.sharedPoints === 1 ? '' : 's'}`);
  if (p.awaitingApproval) flags.push('Waiting for approval');
  return flags;
}

/** Groups in the order the server sorted them (pipeline, then position). */
export function byPipeline(permits: PlanPermit[]): { pipelineId: string; pipelineName: string; permits: PlanPermit[] }[] {
  const groups = new Map<string, { pipelineId: string; pipelineName: string; permits: PlanPermit[] }>();
  for (const p of permits) {
    const g = groups.get(p.pipelineId) ?? { pipelineId: p.pipelineId, pipelineName: p.pipelineName, permits: [] };
    g.permits.push(p);
    groups.set(p.pipelineId, g);
  }
  return [...groups.values()];
}
