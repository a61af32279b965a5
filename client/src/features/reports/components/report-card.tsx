import { lazy, Suspense, useEffect, useRef, useState } from 'react';
import { toCsv } from '@shared/csv/csv';
import type { ReportsOverview } from '@shared/types/reports';
import { Button } from '@client/components/ui/button';
import { Loading } from '@client/components/ui/page';
import { csvFileName, type Figure } from '../lib/report-figures';

// The charting library is the page's heaviest part: it comes in its own chunk, asked for while the figures load.
export const loadReportChart = () => import('./report-chart');
const ReportChart = lazy(loadReportChart);

function download(figure: Figure, days: number, siteDayMade: string) {
  const blob = new Blob([toCsv([figure.csvHead, ...figure.csvRows])], { type: 'text/csv;charset=utf-8' });
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = csvFileName(figure, days, siteDayMade);
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** True once the element has come near the screen: charts further down are drawn when the reader gets to them. */
function useNearScreen() {
  const ref = useRef<HTMLDivElement>(null);
  const [near, setNear] = useState(false);
  useEffect(() => {
    const el = ref.current;
    if (!el || near) return;
    const observer = new IntersectionObserver((entries) => {
      if (entries.some((e) => e.isIntersecting)) setNear(true);
    }, { rootMargin: '400px 0px' });
    observer.observe(el);
    return () => observer.disconnect();
  }, [near]);
  return [ref, near] as const;
}

/** The chart, named for a screen reader, whose table beside it holds the numbers. */
function FigureChart({ figure, overview }: { figure: Figure; overview: ReportsOverview }) {
  const [box, near] = useNearScreen();
  return (
    <div ref={box} role="img" aria-label={`Chart of ${figure.title.toLowerCase()}; the table beside it holds the same numbers.`} className="min-h-40 min-w-0">
      {near ? (
        <Suspense fallback={<Loading label="Drawing the chart…" />}>
          <ReportChart figure={figure.key} overview={overview} />
        </Suspense>
      ) : null}
    </div>
  );
}

/** One figure: its chart and, beside it (below it on a phone), the same numbers as a table and a CSV file. */
export function ReportCard({ figure, overview, siteDayMade }: { figure: Figure; overview: ReportsOverview; siteDayMade: string }) {
  const headingId = `report-${figure.key}`;
  return (
    <section aria-labelledby={headingId} className="flex min-w-0 flex-col gap-3 rounded-card border border-line bg-surface p-4" data-testid={`report-${figure.key}`}>
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h2 id={headingId} className="text-lg font-semibold">
          {figure.title}
        </h2>
        {figure.empty ? null : (
          <Button type="button" variant="secondary" onClick={() => download(figure, overview.days, siteDayMade)}>
            Download as CSV
          </Button>
        )}
      </div>
      {figure.empty ? (
        <p className="text-ink-soft" data-testid="report-empty">
          {figure.empty}
        </p>
      ) : (
        <div className="grid min-w-0 gap-4 lg:grid-cols-2">
          <FigureChart figure={figure} overview={overview} />
          {/* A wide or long table scrolls inside its own box, never the page; the box takes the focus so a keyboard can scroll it. */}
          <div className="max-h-96 min-w-0 self-start overflow-auto rounded-card border border-line" role="region" aria-label={`${figure.title}: table`} tabIndex={0}>
            <table className="w-full border-collapse text-left text-sm">
              <caption className="sr-only">{figure.title}</caption>
              <thead className="sticky top-0 bg-brand-soft">
                <tr>
                  {figure.head.map((h, i) => (
                    <th key={h} scope="col" className={`px-3 py-2 font-semibold ${i ? 'text-right' : ''}`}>
                      {h}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {figure.rows.map((r) => (
                  <tr key={r.key} className="border-t border-line">
                    {r.cells.map((c, i) =>
                      i ? (
                        <td key={i} className="px-3 py-2 text-right tabular-nums">
                          {c}
                        </td>
                      ) : (
                        <th key={i} scope="row" className="min-w-32 px-3 py-2 font-normal">
                          {c}
                        </th>
                      ),
                    )}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </div>
      )}
    </section>
  );
}
