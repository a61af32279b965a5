import { Link, Outlet, useParams } from 'react-router-dom';
import { editableStates, finishedStates, liveStates, workKindLabels } from '@shared/permit/states';
import { formatInZone } from '@shared/time/zone';
import { Notice } from '@client/components/ui/notice';
import { AsOf } from '@client/components/as-of';
import { usePermit } from '../api/get-permit';
import { PermitStateBadge } from '../components/permit-state-badge';
import { ValidityCountdown } from '../components/validity-countdown';
import { GasTestDue } from '../components/gas-test-due';
import { PermitLoading } from '../components/permit-loading';
import { SuspensionNotice } from '../components/suspension-notice';
import { PermitSectionNav } from '../components/permit-section-nav';
import { useTenantSettings } from '../hooks/use-tenant-settings';
import type { PermitOutlet } from '../lib/permit-outlet';
import { useWatchPermit } from '@client/lib/live';

/**
 * The permit's frame: what it is, its state and times, and the notices that matter on every part of
 * it; below, its summary (/permits/:id) or one of its sections (/permits/:id/<section>), one tap apart.
 */
export default function PermitPage() {
  const { id = '' } = useParams();
  useWatchPermit(id);
  const permit = usePermit(id);
  const { timeZone } = useTenantSettings();

  if (!permit.isSuccess) return <PermitLoading permit={permit} />;

  const p = permit.data;
  const finished = finishedStates.includes(p.state);

  return (
    <div className="flex min-w-0 flex-col gap-4">
      <header className="flex flex-col gap-2">
        <p className="text-sm">
          <Link to="/permits" className="inline-flex min-h-11 items-center">
            ← Permits
          </Link>
        </p>
        <div className="flex flex-wrap items-center gap-3">
          <h1 className="text-2xl font-bold break-words text-brand-strong">
            <span className="whitespace-nowrap">{p.number}</span> <span className="font-semibold">{p.title}</span>
          </h1>
          <PermitStateBadge state={p.state} />
        </div>
        <AsOf updatedAt={permit.dataUpdatedAt} timeZone={timeZone} />
        <p className="text-sm text-ink-soft">{p.kinds.map((k) => workKindLabels[k]).join(', ')}</p>
        <p className="flex flex-wrap gap-x-3 gap-y-1">
          {!finished ? <ValidityCountdown validFrom={p.validFrom} validTo={p.validTo} /> : null}
          <span className="text-sm text-ink-soft">
            {formatInZone(p.validFrom, timeZone)} to {formatInZone(p.validTo, timeZone)}
          </span>
          {liveStates.includes(p.state) ? <GasTestDue due={p.nextGasTestDue} timeZone={timeZone} /> : null}
        </p>
      </header>

      {editableStates.includes(p.state) && p.rejectionReason ? (
        <Notice tone="caution" title="Sent back by the authoriser" role="status">
          <p className="break-words whitespace-pre-line">{p.rejectionReason}</p>
        </Notice>
      ) : null}

      <SuspensionNotice permit={p} timeZone={timeZone} />

      {p.workOverlaps.length ? (
        <Notice tone="caution" title="Other work on the same stretch of line" role="status">
          <ul className="list-disc pl-5 text-sm" data-testid="work-overlaps">
            {p.workOverlaps.map((o) => (
              <li key={o.permitNumber}>{o.message}.</li>
            ))}
            {p.workOverlapsMore ? (
              <li>
                And {p.workOverlapsMore} more {p.workOverlapsMore === 1 ? 'permit' : 'permits'} on this stretch.
              </li>
            ) : null}
          </ul>
          <p className="text-sm">Check the two jobs, their isolations and their crews are planned together before either goes ahead.</p>
        </Notice>
      ) : null}

      <PermitSectionNav permitId={p.id} />
      <Outlet context={{ permit: p, refetch: () => void permit.refetch() } satisfies PermitOutlet} />
    </div>
  );
}
