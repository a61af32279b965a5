import { useId, useState } from 'react';
import { assetCsvColumns } from '@shared/assets/asset-csv';
import type { ImportReport } from '@shared/assets/types';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useImportAssets } from '../api/import-assets';

function Counts({ report }: { report: ImportReport }) {
  const line = (label: string, c: { create: number; update: number }) => `${label}: ${c.create} new, ${c.update} changed`;
  return (
    <ul className="list-disc pl-5 text-sm">
      <li>{line('Pipelines', report.pipelines)}</li>
      <li>{line('Sites', report.sites)}</li>
      <li>{line('Points', report.points)}</li>
    </ul>
  );
}

function Problems({ report }: { report: ImportReport }) {
  return (
    <div className="relative overflow-x-auto rounded-card border border-line">
      <table className="w-full text-left text-sm" data-testid="import-errors">
        <caption className="sr-only">Problems found in the file</caption>
        <thead className="bg-danger-soft">
          <tr>
            <th scope="col" className="px-3 py-2">Row</th>
            <th scope="col" className="px-3 py-2">Column</th>
            <th scope="col" className="px-3 py-2">Problem</th>
          </tr>
        </thead>
        <tbody>
          {report.errors.map((e, i) => (
            <tr key={i} className="border-t border-line">
              <td className="px-3 py-2">{e.row || 'file'}</td>
              <td className="px-3 py-2 font-mono">{e.column ?? '—'}</td>
              <td className="px-3 py-2">{e.message}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

/** Upload → check (nothing written) → import the whole file in one go, or nothing. */
export function ImportPanel() {
  const inputId = useId();
  const [file, setFile] = useState<File | null>(null);
  const [report, setReport] = useState<ImportReport | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const run = useImportAssets();
  const toast = useToast();

  const send = (dryRun: boolean) => {
    if (!file) return;
    setProblem(null);
    run.mutate(
      { file, dryRun },
      {
        onSuccess: (r) => {
          setReport(r);
          if (r.applied) toast('success', `Imported ${r.rows} rows.`);
        },
        onError: (e) => {
          const fromServer = e instanceof ApiError ? (e.body.report as ImportReport | undefined) : undefined;
          if (fromServer) setReport(fromServer);
          setProblem(e.message);
        },
      },
    );
  };

  return (
    <div className="flex flex-col gap-3">
      <p className="text-sm text-ink-soft">
        One row per pipeline, site or point; the first row names the columns: <code className="break-all text-xs">{assetCsvColumns.join(',')}</code>. A file is checked whole and
        imported whole, or not at all. Rows match the register by pipeline code and tag code, so an exported file can be edited and imported back.
      </p>
      <div className="flex flex-col gap-1">
        <label htmlFor={inputId} className="text-sm font-semibold">
          CSV file (up to 2 MB)
        </label>
        <input
          id={inputId}
          type="file"
          accept=".csv,text/csv"
          className="min-h-11 rounded-md border border-line bg-surface p-2 text-sm"
          onChange={(e) => {
            setFile(e.target.files?.[0] ?? null);
            setReport(null);
            setProblem(null);
          }}
        />
      </div>
      <div className="flex flex-wrap gap-2">
        <Button type="button" variant="secondary" disabled={!file} busy={run.isPending && run.variables?.dryRun} onClick={() => send(true)}>
          Check the file
        </Button>
        <Button type="button" disabled={!file || !report?.valid || report.applied} busy={run.isPending && !run.variables?.dryRun} onClick={() => send(false)}>
          Import it
        </Button>
      </div>
      {problem && !report ? (
        <Notice tone="danger" role="alert">
          {problem}
        </Notice>
      ) : null}
      {report ? (
        <div className="flex flex-col gap-2" data-testid="import-report">
          {report.applied ? (
            <Notice tone="safe" role="status" title="Imported">
              <Counts report={report} />
            </Notice>
          ) : report.valid ? (
            <Notice tone="info" role="status" title={`The file is ready: ${report.rows} rows, nothing written yet`}>
              <Counts report={report} />
            </Notice>
          ) : (
            <Notice tone="danger" role="alert" title={`${report.errors.length} problem${report.errors.length === 1 ? '' : 's'} found; nothing was written`}>
              Fix them in the file and check it again.
            </Notice>
          )}
          {report.errors.length ? <Problems report={report} /> : null}
        </div>
      ) : null}
    </div>
  );
}
