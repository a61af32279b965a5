import { useEffect, useMemo } from 'react';
import { reportPeriods, reportsQuerySchema } from '@shared/schemas/reports.schema';
import { formatInZone, siteDay } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { Notice } from '@client/components/ui/notice';
import { Loading, PageHeader } from '@client/components/ui/page';
import { useAbility } from '@client/lib/ability';
import { useListQuery } from '@client/lib/list-query';
import { useReportsOverview } from '../api/get-reports-overview';
import { loadReportChart, ReportCard } from '../components/report-card';
import { reportFigures } from '../lib/report-figures';

export default function ReportsPage() {
  const allowed = useAbility().can('read', 'Report');
  const { query, set } = useListQuery(reportsQuerySchema);
  const overview = useReportsOverview(query, allowed);
  const data = overview.data;
  const figures = useMemo(() => (data ? reportFigures(data) : []), [data]);
  useEffect(() => {
    if (allowed) void loadReportChart();
  }, [allowed]);

  if (!allowed)
    return (
      <>
        <PageHeader title="Reports" />
        <Notice tone="info" role="alert" title="You may not see the reports.">
          <p>The reports are for tenant admins, authorisers and auditors. Ask a tenant admin if your work needs them.</p>
        </Notice>
      </>
    );

  return (
    <>
      <PageHeader title="Reports" subtitle="How permits moved, how long each stage took, suspensions, gas tests and checks, isolations in place and qualifications running out." />
      <div className="flex min-w-0 flex-col gap-4">
        <div role="group" aria-label="Period" className="flex flex-wrap items-center gap-2">
          {reportPeriods.map((p) => (
            <Button key={p} type="button" variant={query.days === p ? 'primary' : 'secondary'} aria-pressed={query.days === p} onClick={() => set({ days: p })}>
              {p} days
            </Button>
          ))}
        </div>
        {data ? (
          <p className="text-sm text-ink-soft" aria-live="polite" data-testid="report-as-of">
            The last {data.days} days, from {formatInZone(data.since, data.timeZone)}. As of {formatInZone(data.generatedAt, data.timeZone)}.
          </p>
        ) : null}
        {overview.isPending ? (
          <Loading label="Loading the reports…" />
        ) : overview.isError ? (
          <Notice tone="danger" role="alert" title="The reports could not be loaded.">
            <p>{overview.error.message}</p>
            <Button variant="secondary" onClick={() => void overview.refetch()}>
              Try again
            </Button>
          </Notice>
        ) : data ? (
          <div className="flex min-w-0 flex-col gap-4" aria-busy={overview.isPlaceholderData || undefined}>
            {figures.map((f) => (
              <ReportCard key={f.key} figure={f} overview={data} siteDayMade={siteDay(new Date(data.generatedAt), data.timeZone)} />
            ))}
          </div>
        ) : null}
      </div>
    </>
  );
}
