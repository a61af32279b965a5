import { useMemo } from 'react';
import { planOverlapsPerPermit, planPageQuerySchema } from '@shared/schemas/plan.schema';
import { formatInZone, siteDay } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { SelectField, TextField } from '@client/components/ui/field';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { EmptyState, Loading, PageHeader } from '@client/components/ui/page';
import { useListQuery } from '@client/lib/list-query';
import { useMe } from '@client/features/auth';
import { useNow } from '@client/features/permits';
import { usePlan } from '../api/get-plan';
import { PlanTimeline } from '../components/plan-timeline';
import { PlanDay } from '../components/plan-day';
import { countWords, overlapWords } from '../lib/plan-words';

export default function PlanPage() {
  const { query, set } = useListQuery(planPageQuerySchema);
  const filters = useMemo(() => ({ pipelineId: query.pipelineId, contractorId: query.contractorId }), [query.pipelineId, query.contractorId]);
  const plan = usePlan(filters);
  const now = useNow(60_000);
  const { data: me } = useMe();
  const timeZone = plan.data?.timeZone ?? me?.activeTenant?.timeZone ?? 'UTC';
  const unit = me?.activeTenant?.locationUnit ?? 'mi';
  const data = plan.data;
  const awaiting = data?.permits.filter((p) => p.awaitingApproval).length ?? 0;
  // Every meeting, listed or only counted (a permit that meets many others names the first few).
  const meetings = data ? data.overlaps.length + data.overlapsMore : 0;
  const listed = Math.min(50, data?.overlaps.length ?? 0);

  return (
    <>
      <div className="print:hidden">
        <PageHeader
          title="The week ahead"
          subtitle="Permits per pipeline over the past 7 days and the next 14, by validity and position along the line. Work that overlaps, shared isolation points and permits waiting for approval are marked."
          actions={
            <>
              <Button variant="secondary" className="min-h-11" onClick={() => set({ day: siteDay(now, timeZone) })}>
                Today&apos;s meeting
              </Button>
              {query.day ? (
                <Button variant="secondary" className="min-h-11" onClick={() => window.print()}>
                  Print the day
                </Button>
              ) : null}
            </>
          }
        />
      </div>
      <div className="flex min-w-0 flex-col gap-4">
        <SafetyCaution>The plan shows what permits say. Agree the order of work on shared stretches and points before any of it starts. </SafetyCaution>
        <form className="grid gap-3 sm:grid-cols-3 print:hidden" aria-label="Filter the plan" onSubmit={(e) => e.preventDefault()}>
          <SelectField label="Pipeline" value={query.pipelineId ?? ''} onChange={(e) => set({ pipelineId: e.target.value || undefined })}>
            <option value="">All pipelines</option>
            {data?.pipelines.map((p) => (
              <option key={p.id} value={p.id}>
                {p.name}
              </option>
            ))}
          </SelectField>
          <SelectField label="Contractor" value={query.contractorId ?? ''} onChange={(e) => set({ contractorId: e.target.value || undefined })}>
            <option value="">All contractors</option>
            {data?.contractors.map((c) => (
              <option key={c.id} value={c.id}>
                {c.name}
              </option>
            ))}
          </SelectField>
          <TextField label="Day view" type="date" value={query.day ?? ''} onChange={(e) => set({ day: e.target.value || undefined })} hint="One day for the morning meeting" />
        </form>
        {data ? (
          <p className="text-sm text-ink-soft print:hidden" aria-live="polite" data-testid="plan-summary">
            {data.permits.length} permit{data.permits.length === 1 ? '' : 's'}
            {data.more ? ` (and ${data.more} more not drawn)` : ''}, {countWords(meetings, 'place')} where permits meet, {awaiting} waiting for
            approval · from {formatInZone(data.from, timeZone)} to {formatInZone(data.to, timeZone)} · as of {formatInZone(data.generatedAt, timeZone)}
          </p>
        ) : null}
        {plan.isPending ? (
          <Loading label="Loading the plan…" />
        ) : plan.isError ? (
          <Notice tone="danger" role="alert" title="The plan could not be loaded.">
            <p>{plan.error.message}</p>
            <Button variant="secondary" onClick={() => void plan.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : data ? (
          <>
            {query.day ? <PlanDay day={query.day} permits={data.permits} overlaps={data.overlaps} overlapsMore={data.overlapsMore} timeZone={timeZone} unit={unit} /> : null}
            <div className={query.day ? 'print:hidden' : ''}>
              {meetings ? (
                <Notice tone="danger" title={`Permits meet in ${countWords(meetings, 'place')}`}>
                  <ul className="list-disc pl-5" data-testid="plan-overlaps">
                    {data.overlaps.slice(0, 50).map((o) => (
                      <li key={`${o.kind}-${o.first.id}-${o.second.id}-${o.pointLabel ?? ''}`}>
                        <strong>{o.kind === 'shared_point' ? 'Shared point: ' : 'Overlapping work: '}</strong>
                        {overlapWords(o, unit, timeZone)}
                      </li>
                    ))}
                  </ul>
                  {data.overlapsMore ? (
                    <p data-testid="plan-overlaps-more">
                      And {countWords(meetings - listed, 'more place')}. Where a permit meets more than {planOverlapsPerPermit} others, only the first {planOverlapsPerPermit} by permit
                      number are listed; the count on each permit is the full number. Filter by pipeline or contractor to narrow the list.
                    </p>
                  ) : meetings > listed ? (
                    <p>And {meetings - listed} more: filter by pipeline to see them all.</p>
                  ) : null}
                </Notice>
              ) : null}
              {!data.permits.length ? (
                <EmptyState title="No permits in these weeks.">{query.pipelineId || query.contractorId ? 'None match these filters.' : 'Permits appear here once they are sent for approval.'}</EmptyState>
              ) : (
                <div className="mt-4">
                  <PlanTimeline from={data.from} to={data.to} permits={data.permits} timeZone={timeZone} unit={unit} now={now} />
                </div>
              )}
            </div>
          </>
        ) : null}
      </div>
    </>
  );
}
