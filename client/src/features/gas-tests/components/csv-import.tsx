import { useId, useState } from 'react';
import { readingColumnLabels, readingColumns, type ColumnMapping } from '@shared/gas-tests/csv-readings';
import { gasTestPlaceLabels, gasTestPlaces, type GasTestPlace } from '@shared/schemas/gas-tests.schema';
import type { GasImportResult } from '@shared/types/gas-tests';
import { formatInZone } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { SelectField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useInstruments } from '../api/get-instruments';
import { useImportGasLog } from '../api/import-gas-log';

type Phase = 'idle' | 'reading' | 'checking' | 'importing';
const phaseLabel: Record<Phase, string> = { idle: '', reading: 'Reading the file', checking: 'Checking every row', importing: 'Importing the readings' };

/** Load a monitor's CSV log: choose the columns, see every row checked, then import all of it or nothing. */
export function CsvImport({ permitId, timeZone }: { permitId: string; timeZone: string }) {
  const fileId = useId();
  const instruments = useInstruments();
  const toast = useToast();
  const [phase, setPhase] = useState<Phase>('idle');
  const [progress, setProgress] = useState(0);
  const [csv, setCsv] = useState<{ name: string; text: string } | null>(null);
  const [instrumentId, setInstrumentId] = useState('');
  const [place, setPlace] = useState<GasTestPlace>('work_area');
  const [mapping, setMapping] = useState<Partial<ColumnMapping>>({});
  const [result, setResult] = useState<GasImportResult | null>(null);
  const [error, setError] = useState<ApiError | Error | null>(null);
  const send = useImportGasLog(permitId, setProgress);

  const run = async (text: string, dryRun: boolean, map = mapping) => {
    if (!instrumentId) return setError(new Error('Choose the instrument the log came from first.'));
    setError(null);
    setPhase(dryRun ? 'checking' : 'importing');
    setProgress(0);
    try {
      const r = await send.mutateAsync({ csv: text, instrumentId, place, mapping: map, dryRun });
      setResult(r);
      setMapping(r.mapping);
      if (!dryRun) toast(r.suspended ? 'error' : 'success', r.suspended ? `Imported ${r.imported} readings; a failing reading suspended the permit.` : `Imported ${r.imported} readings.`);
    } catch (err) {
      setError(err as Error);
      if (err instanceof ApiError && Array.isArray(err.body.invalidRows)) setResult((old) => (old ? { ...old, invalidRows: err.body.invalidRows as GasImportResult['invalidRows'] } : old));
    } finally {
      setPhase('idle');
    }
  };

  const readFile = (file: File) => {
    setResult(null);
    setPhase('reading');
    setProgress(0);
    const reader = new FileReader();
    reader.onprogress = (e) => e.lengthComputable && setProgress(e.loaded / e.total);
    reader.onerror = () => {
      setPhase('idle');
      setError(new Error('The file could not be read.'));
    };
    reader.onload = () => {
      const text = String(reader.result ?? '');
      setCsv({ name: file.name, text });
      setMapping({});
      void run(text, true, {});
    };
    reader.readAsText(file);
  };

  const canImport = result?.dryRun && !result.mappingProblems?.length && result.invalidRows.length === 0 && result.validRows > 0;
  return (
    <section aria-labelledby={`${fileId}-h`} className="flex flex-col gap-3">
      <h3 id={`${fileId}-h`} className="text-lg font-semibold">
        Import a monitor log (CSV)
      </h3>
      <div className="grid gap-3 sm:grid-cols-2">
        <SelectField label="Instrument the log came from" value={instrumentId} onChange={(e) => setInstrumentId(e.target.value)}>
          <option value="">Choose…</option>
          {(instruments.data?.items ?? []).map((i) => (
            <option key={i.id} value={i.id}>
              {i.model} · {i.serial}
            </option>
          ))}
        </SelectField>
        <SelectField label="Where the monitor was" value={place} onChange={(e) => setPlace(e.target.value as GasTestPlace)}>
          {gasTestPlaces.filter((p) => p !== 'other').map((p) => (
            <option key={p} value={p}>
              {gasTestPlaceLabels[p]}
            </option>
          ))}
        </SelectField>
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor={fileId} className="text-sm font-semibold">
          Log file
        </label>
        <input id={fileId} type="file" accept=".csv,text/csv" disabled={!instrumentId || phase !== 'idle'} className="min-h-11 text-base" onChange={(e) => e.target.files?.[0] && readFile(e.target.files[0])} />
        <p className="text-xs text-ink-soft">A header row, then one reading per row: date and time, O₂, LEL, H₂S and CO. Times without a zone are read as site time. At most 5,000 rows, 1 MB.</p>
      </div>
      {phase !== 'idle' ? (
        <div role="status" className="flex flex-col gap-1">
          <span className="text-sm">
            {phaseLabel[phase]}… {Math.round(progress * 100)} %
          </span>
          <progress className="h-3 w-full" max={1} value={progress} aria-label={phaseLabel[phase]} />
        </div>
      ) : null}
      {error ? (
        <Notice tone="danger" role="alert">
          {error.message}
        </Notice>
      ) : null}
      {csv && result ? (
        <div className="flex flex-col gap-3" data-testid="import-preview">
          <fieldset className="grid gap-3 sm:grid-cols-3">
            <legend className="mb-1 text-sm font-semibold">Which column holds what ({csv.name})</legend>
            {readingColumns.map((col) => (
              <SelectField
                key={col}
                label={readingColumnLabels[col]}
                value={mapping[col] ?? ''}
                onChange={(e) => setMapping({ ...mapping, [col]: e.target.value || undefined })}
                error={result.mappingProblems?.find((p) => p.path === `mapping.${col}`)?.message}
              >
                <option value="">Choose a column…</option>
                {result.headers.map((h) => (
                  <option key={h} value={h}>
                    {h}
                  </option>
                ))}
              </SelectField>
            ))}
          </fieldset>
          <div>
            <Button type="button" variant="secondary" disabled={phase !== 'idle'} onClick={() => void run(csv.text, true)}>
              Check the rows again
            </Button>
          </div>
          <p className="text-sm">
            {result.rows} row(s) in the file: <strong>{result.validRows} valid</strong>, <strong className={result.invalidRows.length ? 'text-danger' : ''}>{result.invalidRows.length} not valid</strong>
            {result.failing ? `, ${result.failing} reading(s) outside the limits` : ''}.
          </p>
          {result.invalidRows.length ? (
            <Notice tone="danger" title="Rows that cannot be imported (nothing is imported until every row is valid)">
              <ul className="list-disc pl-5" data-testid="invalid-rows">
                {result.invalidRows.slice(0, 50).map((r) => (
                  <li key={r.row}>
                    Row {r.row}: {r.reasons.join(' ')}
                  </li>
                ))}
              </ul>
            </Notice>
          ) : null}
          {result.preview.length ? (
            <div className="overflow-x-auto rounded-card border border-line">
              <table className="w-full text-left text-sm">
                <caption className="sr-only">First readings of the file</caption>
                <thead className="bg-brand-soft">
                  <tr>
                    {['Row', 'Time', 'O₂', 'LEL', 'H₂S', 'CO', 'Verdict'].map((h) => (
                      <th key={h} scope="col" className="px-2 py-1">
                        {h}
                      </th>
                    ))}
                  </tr>
                </thead>
                <tbody>
                  {result.preview.map((r) => (
                    <tr key={r.row} className="border-t border-line">
                      <td className="px-2 py-1">{r.row}</td>
                      <td className="px-2 py-1">{formatInZone(r.testedAt, timeZone, 'dayTime')}</td>
                      <td className="px-2 py-1">{r.readings.o2Pct}</td>
                      <td className="px-2 py-1">{r.readings.lelPct}</td>
                      <td className="px-2 py-1">{r.readings.h2sPpm}</td>
                      <td className="px-2 py-1">{r.readings.coPpm}</td>
                      <td className={`px-2 py-1 font-semibold ${r.verdict === 'fail' ? 'text-danger' : 'text-safe'}`}>{r.verdict === 'fail' ? '✕ Fail' : '✓ Pass'}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          ) : null}
          {result.dryRun ? (
            <div>
              <Button type="button" disabled={!canImport || phase !== 'idle'} busy={phase === 'importing'} onClick={() => void run(csv.text, false)}>
                Import {result.validRows} reading(s)
              </Button>
            </div>
          ) : (
            <Notice tone={result.suspended ? 'danger' : 'safe'} role="status" title={`Imported ${result.imported} reading(s) as one series.`}>
              {result.suspended ? 'A failing reading taken during live work suspended the permit.' : 'The readings are in the history and the chart.'}
            </Notice>
          )}
        </div>
      ) : null}
    </section>
  );
}
