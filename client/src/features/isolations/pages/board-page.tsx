import { useCallback, useMemo, useState } from 'react';
import { boardQuerySchema, type BoardQuery } from '@shared/schemas/isolation.schema';
import type { BoardItem } from '@shared/types/board';
import { formatInZone } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { useListQuery } from '@client/lib/list-query';
import { useMe } from '@client/features/auth';
import { useNow } from '@client/features/permits';
import { LongTermRechecks } from '@client/features/certificates';
import { useBoard } from '../api/get-board';
import { AcknowledgeDialog } from '../components/acknowledge-dialog';
import { awaitsAcknowledgement, type BoardAcknowledgement } from '../components/board-row';
import { BoardFilters } from '../components/board-filters';
import { LiveIndicator } from '../components/live-indicator';
import { BoardList } from '../components/board-list';
import { useBoardStream } from '../hooks/use-board-stream';

export default function BoardPage() {
  const { query: filters, set } = useListQuery(boardQuerySchema);
  const board = useBoard(filters);
  const status = useBoardStream();
  const now = useNow(30_000);
  const { data: me } = useMe();
  const [acknowledging, setAcknowledging] = useState<{ item: BoardItem; what: BoardAcknowledgement } | null>(null);
  const timeZone = me?.activeTenant?.timeZone ?? 'UTC';
  const unit = me?.activeTenant?.locationUnit ?? 'mi';
  const tenantId = me?.activeTenantId ?? '';

  const setFilters = (next: BoardQuery) => set({ pipelineId: next.pipelineId, permitState: next.permitState, unacknowledged: next.unacknowledged });

  const items = useMemo(() => board.data?.items ?? [], [board.data]);
  const unacknowledged = useMemo(() => items.filter(awaitsAcknowledgement).length, [items]);
  const onAcknowledge = useCallback((item: BoardItem, what: BoardAcknowledgement) => setAcknowledging({ item, what }), []);

  return (
    <>
      <PageHeader
        title="Live board"
        subtitle="Every isolation in place now, by pipeline and position. Newly applied ones stand out until the control room acknowledges them."
        actions={<LiveIndicator status={status} />}
      />
      <div className="flex min-w-0 flex-col gap-4">
        <SafetyCaution>The board shows what has been recorded. Confirm with the crew on site before any valve is operated. </SafetyCaution>
        <BoardFilters value={filters} onChange={setFilters} />
        <LongTermRechecks timeZone={timeZone} />
        {board.data ? (
          <p className="text-sm text-ink-soft" aria-live="polite" data-testid="board-summary">
            {board.data.total} isolation{board.data.total === 1 ? '' : 's'} in place
            {unacknowledged ? `, ${unacknowledged} not yet acknowledged` : ''} · as of {formatInZone(board.data.generatedAt, timeZone)}
          </p>
        ) : null}
        {board.isPending ? (
          <Loading label="Loading the board…" />
        ) : board.isError ? (
          <Notice tone="danger" role="alert" title="The board could not be loaded.">
            <p>{board.error.message}</p>
            <Button variant="secondary" onClick={() => void board.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : !items.length ? (
          <EmptyState title="No isolations in place.">{filters.unacknowledged === 'true' && !filters.pipelineId && !filters.permitState
              ? 'Every isolation in place has been acknowledged.'
              : filters.pipelineId || filters.permitState || filters.unacknowledged
                ? 'None match these filters.'
                : 'Isolations appear here as soon as they are applied.'}</EmptyState>
        ) : (
          <BoardList items={items} tenantId={tenantId} unit={unit} timeZone={timeZone} now={now} onAcknowledge={onAcknowledge} />
        )}
      </div>
      {acknowledging ? (
        <AcknowledgeDialog
          permitId={acknowledging.item.permit.id}
          step={{ id: acknowledging.item.stepId, label: acknowledging.item.label, condition: acknowledging.item.condition }}
          what={acknowledging.what}
          onClose={() => setAcknowledging(null)}
        />
      ) : null}
    </>
  );
}
