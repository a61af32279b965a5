import { useState } from 'react';
import type { ColumnDef } from '@tanstack/react-table';
import { gasTestPlaceLabels } from '@shared/schemas/gas-tests.schema';
import type { GasTestRow } from '@shared/types/gas-tests';
import { formatInZone } from '@shared/time/zone';
import { DataTable } from '@client/components/ui/data-table';
import { EnteredLate } from '@client/components/ui/entered-late';
import { useGasTests } from '../api/get-gas-tests';

function VerdictBadge({ verdict }: { verdict: 'pass' | 'fail' }) {
  return (
    <span data-testid="gas-verdict" className={`inline-flex items-center gap-1 rounded-full px-2 py-0.5 text-sm font-bold ${verdict === 'pass' ? 'bg-safe text-white' : 'bg-danger text-white'}`}>
      <span aria-hidden>{verdict === 'pass' ? '✓' : '✕'}</span>
      {verdict === 'pass' ? 'Pass' : 'Fail'}
    </span>
  );
}

const cellClass = (row: GasTestRow, gas: 'o2' | 'lel' | 'h2s' | 'co') => (row.assessment.gases?.[gas]?.verdict === 'fail' ? 'font-bold text-danger' : '');

/** Every recorded test of the permit, newest first, paged on the server. */
export function GasTestHistory({ permitId, timeZone }: { permitId: string; timeZone: string }) {
  const [page, setPage] = useState(1);
  const tests = useGasTests(permitId, page);
  const columns: ColumnDef<GasTestRow, unknown>[] = [
    {
      header: 'Tested at',
      cell: ({ row }) => (
        <>
          {formatInZone(row.original.testedAt, timeZone, 'dayTime')}
          {row.original.enteredLate ? <EnteredLate /> : null}
        </>
      ),
    },
    { header: 'Where', cell: ({ row }) => (row.original.place === 'other' ? row.original.placeNote : gasTestPlaceLabels[row.original.place]) },
    { header: 'O₂ % vol', cell: ({ row }) => <span className={cellClass(row.original, 'o2')}>{row.original.readings.o2Pct}</span> },
    { header: 'LEL %', cell: ({ row }) => <span className={cellClass(row.original, 'lel')}>{row.original.readings.lelPct}</span> },
    { header: 'H₂S ppm', cell: ({ row }) => <span className={cellClass(row.original, 'h2s')}>{row.original.readings.h2sPpm}</span> },
    { header: 'CO ppm', cell: ({ row }) => <span className={cellClass(row.original, 'co')}>{row.original.readings.coPpm}</span> },
    { header: 'Verdict', cell: ({ row }) => <VerdictBadge verdict={row.original.verdict} /> },
    {
      header: 'By',
      cell: ({ row }) => (
        <span className="text-xs">
          {row.original.testerName}
          {row.original.instrument ? <span className="block text-ink-soft">{row.original.instrument.serial}</span> : null}
          {row.original.source === 'import' ? <span className="block text-ink-soft">imported log</span> : null}
        </span>
      ),
    },
  ];
  return (
    <DataTable
      caption="Gas tests of this permit, newest first"
      columns={columns}
      data={tests.data}
      isLoading={tests.isPending}
      page={page}
      onPage={setPage}
      empty={{ title: 'No gas test recorded yet.', hint: 'Work cannot start until a passing test is recorded.' }}
      rowTestId="gas-test-row"
    />
  );
}
