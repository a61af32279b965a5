import type { PlanStepInput, StepKind } from '@shared/schemas/isolation.schema';
import type { IsolationStep } from '@shared/types/isolations';

/** One row of the plan while the planner edits it; `key` stays with the row when it moves. */
export interface DraftRow {
  key: string;
  pointId?: string;
  tempLabel?: string;
  tempPosition?: number;
  kind: StepKind;
  plugDiameterIn?: number;
  label: string;
  position: number;
}

let counter = 0;
export const newRowKey = () => `new-${Date.now().toString(36)}-${(counter++).toString(36)}`;

export function rowsFromSteps(steps: IsolationStep[]): DraftRow[] {
  return steps.map((s) => ({
    key: s.id,
    pointId: s.pointId ?? undefined,
    tempLabel: s.pointId ? undefined : s.label,
    tempPosition: s.pointId ? undefined : s.position,
    kind: s.kind,
    plugDiameterIn: s.plugDiameterIn ?? undefined,
    label: s.label,
    position: s.position,
  }));
}

export function rowsFromProposal(steps: (PlanStepInput & { label: string; position: number })[]): DraftRow[] {
  return steps.map((s) => ({ ...s, key: newRowKey() }));
}

/** What PUT /api/permits/:id/isolations takes for a row: a register point, or a temporary label and position. */
export function toPlanStep(row: DraftRow): PlanStepInput {
  const base = row.pointId ? { pointId: row.pointId, kind: row.kind } : { tempLabel: row.tempLabel ?? row.label, tempPosition: row.tempPosition ?? row.position, kind: row.kind };
  return row.kind === 'plug' && row.plugDiameterIn !== undefined ? { ...base, plugDiameterIn: row.plugDiameterIn } : base;
}

export function moveRow(rows: DraftRow[], key: string, by: -1 | 1): DraftRow[] {
  const from = rows.findIndex((r) => r.key === key);
  const to = from + by;
  if (from < 0 || to < 0 || to >= rows.length) return rows;
  const next = [...rows];
  [next[from], next[to]] = [next[to], next[from]];
  return next;
}

export type RowErrors = Record<string, Record<string, string>>;

/**
 * Puts the server's field errors ("steps.3.kind") on the rows that were sent, by their keys, so they
 * stay beside the right row if the planner then moves it. Anything else is a message for the whole plan.
 */
export function errorsByRow(sent: DraftRow[], details: { path: string; message: string }[]): { rows: RowErrors; general: string[] } {
  const rows: RowErrors = {};
  const general: string[] = [];
  for (const d of details) {
    const m = /^steps\.(\d+)(?:\.(.+))?$/.exec(d.path);
    const row = m ? sent[Number(m[1])] : undefined;
    if (!row) {
      general.push(d.message);
      continue;
    }
    const field = m![2] ?? 'step';
    rows[row.key] = { ...rows[row.key], [field]: d.message };
  }
  return { rows, general };
}
