import type { BoardItem } from '@shared/types/board';

export interface BoardGroup {
  pipelineId: string;
  pipelineName: string;
  items: BoardItem[];
}

/** One line of the virtual board: a pipeline's heading, or one isolation under it. */
export type BoardEntry = { kind: 'group'; key: string; group: BoardGroup } | { kind: 'row'; key: string; item: BoardItem; last: boolean };

/** Items arrive ordered by pipeline and position; keep that order inside each pipeline. */
export function groupByPipeline(items: BoardItem[]): BoardGroup[] {
  const groups = new Map<string, BoardGroup>();
  for (const item of items) {
    let g = groups.get(item.pipelineId);
    if (!g) {
      g = { pipelineId: item.pipelineId, pipelineName: item.pipelineName, items: [] };
      groups.set(item.pipelineId, g);
    }
    g.items.push(item);
  }
  return [...groups.values()];
}

/** The key of a step's row on the board. */
export const boardRowKey = (stepId: string) => `step:${stepId}`;

/** Flattens the groups into one list (heading, then its rows) so headings scroll and virtualise like rows. */
export function boardEntries(groups: BoardGroup[]): BoardEntry[] {
  const entries: BoardEntry[] = [];
  for (const group of groups) {
    entries.push({ kind: 'group', key: `pipeline:${group.pipelineId}`, group });
    group.items.forEach((item, i) => entries.push({ kind: 'row', key: boardRowKey(item.stepId), item, last: i === group.items.length - 1 }));
  }
  return entries;
}
