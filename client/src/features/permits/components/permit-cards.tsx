import { Link } from 'react-router-dom';
import type { PermitSummary } from '@shared/types/permits';
import { liveStates, workKindLabels } from '@shared/permit/states';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { formatInZone } from '@shared/time/zone';
import { PermitStateBadge } from './permit-state-badge';
import { GasTestDue } from './gas-test-due';
import { formatRange } from '../lib/positions';

/** The permits list on a phone: one card per permit instead of a wide table. */
export function PermitCards({ items, timeZone, unit }: { items: PermitSummary[]; timeZone: string; unit: LocationUnit }) {
  return (
    <ul className="flex flex-col gap-3" aria-label="Permits">
      {items.map((p) => (
        <li key={p.id} className="rounded-card border border-line bg-surface p-3" data-testid="permit-card">
          <div className="flex flex-wrap items-center justify-between gap-2">
            <Link to={`/permits/${p.id}`} className="inline-flex min-h-11 items-center font-semibold">
              {p.number}
            </Link>
            <PermitStateBadge state={p.state} />
          </div>
          <p className="font-medium break-words">{p.title}</p>
          <dl className="mt-1 grid grid-cols-[auto_1fr] gap-x-3 text-sm">
            <dt className="text-ink-soft">Work</dt>
            <dd className="min-w-0 break-words">{p.kinds.map((k) => workKindLabels[k]).join(', ')}</dd>
            <dt className="text-ink-soft">Where</dt>
            <dd className="min-w-0 break-words">
              {p.pipelineName}, {formatRange(p.fromPosition, p.toPosition, unit)}
            </dd>
            <dt className="text-ink-soft">Contractor</dt>
            <dd className="min-w-0 break-words">{p.contractorName}</dd>
            <dt className="text-ink-soft">Valid</dt>
            <dd className="min-w-0">
              {formatInZone(p.validFrom, timeZone)} to {formatInZone(p.validTo, timeZone)}
            </dd>
          </dl>
          {liveStates.includes(p.state) ? (
            <p className="mt-1">
              <GasTestDue due={p.nextGasTestDue} timeZone={timeZone} />
            </p>
          ) : null}
        </li>
      ))}
    </ul>
  );
}
