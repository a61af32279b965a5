// FIXME 2: the control room's acknowledgement on My work opens the live board at the very row it names
// (client/src/lib/board-address.ts), not only the board narrowed to its line, where on a long board the row
// is below the first screen and a virtual list has not drawn it.
import { describe, expect, it } from 'vitest';
import type { BoardItem } from '@shared/types/board';
import { boardStepAddress, stepInHash } from '@client/lib/board-address';
import { boardEntries, boardRowKey, groupByPipeline } from '@client/features/isolations/lib/board-entries';

const LINE = '3f1c2a34-5b6d-4e7f-8a9b-0c1d2e3f4a5b';
const row = (stepId: string, label: string, position: number) => ({ stepId, label, position, pipelineId: LINE, pipelineName: 'BM-10 Cedar Run Lateral' }) as BoardItem;

describe('FIXME 2: the board opens at the row the acknowledgement names', () => {
  it('FIXME 2: when the control room follows "Acknowledge applied MW-BV-1" with eight isolations waiting before it on the line, then the address names its step and the board finds that row', () => {
    const before = Array.from({ length: 8 }, (_, i) => row(`0000000${i}-0000-4000-8000-000000000000`, `CR-BV-0${i}`, i));
    const ours = row('9a8b7c6d-5e4f-4a3b-8c2d-1e0f9a8b7c6d', 'MW-BV-1', 23);
    const address = new URL(boardStepAddress(LINE, ours.stepId), 'http://site.example');
    expect(address.pathname).toBe('/board');
    expect(Object.fromEntries(address.searchParams)).toEqual({ unacknowledged: 'true', pipelineId: LINE });
    const step = stepInHash(address.hash);
    expect(step).toBe(ours.stepId);
    const entries = boardEntries(groupByPipeline([...before, ours]));
    // The line's heading, eight rows, then ours: the tenth entry, three screens down on a phone.
    expect(entries.findIndex((e) => e.key === boardRowKey(step!))).toBe(9);
  });

  it('FIXME 2: when the address has no step, or something else after #, then no row is named', () => {
    expect(stepInHash('')).toBeNull();
    expect(stepInHash('#main')).toBeNull();
    expect(stepInHash('#step-')).toBeNull();
    expect(stepInHash('#step-%E0%A4%A')).toBeNull();
  });
});
