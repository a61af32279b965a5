import type { PermitRegime } from '@shared/types/timed-checks';
import { formatInZone } from '@shared/time/zone';
import { Notice } from '@client/components/ui/notice';

/** The latest gas verdict at each place, the places a start or resume needs marked (a fail is cleared only by a later pass at the same place). */
export function GasPlaceVerdicts({ r }: { r: PermitRegime }) {
  const { places, ventOutletLelPct } = r.stopWork;
  return (
    <div className="flex flex-col gap-2" data-testid="gas-place-verdicts">
      <h3 className="text-lg font-semibold">Verdict at each place</h3>
      <ul className="flex flex-col gap-1 text-sm">
        {places.map((p) => (
          <li key={p.place} data-place={p.place} data-verdict={p.latest ?? 'none'} className={`rounded-card border-l-4 px-3 py-1 ${p.latest === 'fail' ? 'border-danger bg-danger-soft' : p.latest === 'pass' ? 'border-safe bg-safe-soft' : 'border-caution bg-caution-soft'}`}>
            <span className="font-semibold">{p.label}</span>
            {p.required ? <span className="text-ink-soft"> (needed before work starts or resumes)</span> : null}:{' '}
            {p.latest === 'fail' ? (
              <strong className="text-danger">failed {formatInZone(p.lastFailAt, r.timeZone, 'dayTime')}; a later pass at this place clears it</strong>
            ) : p.latest === 'pass' ? (
              `passed ${formatInZone(p.lastPassAt, r.timeZone, 'dayTime')}`
            ) : (
              'no test yet'
            )}
          </li>
        ))}
      </ul>
      <p className="text-xs text-ink-soft">
        A reading at a vent outlet is judged against the site&apos;s vent-outlet limit of {ventOutletLelPct} % LEL (common practice, no published source: a vent is expected to carry vapour), never the hot-work limit.
      </p>
    </div>
  );
}

/** What stops work starting or resuming now under the stop-work rules, in the words the server will use. */
export function StopWorkBlockers({ r }: { r: PermitRegime }) {
  if (!r.stopWork.blockers.length) return null;
  return (
    <Notice tone="danger" title="Work cannot start or resume yet">
      <ul className="list-disc pl-5 text-sm" data-testid="stop-work-blockers">
        {r.stopWork.blockers.map((b) => (
          <li key={b}>{b}</li>
        ))}
      </ul>
    </Notice>
  );
}

/** The fire watch's length and its source; a site that chose the OSHA half hour sees a caution. */
export function FireWatchBasis({ r }: { r: PermitRegime }) {
  if (r.stopWork.fireWatchBasis === 'osha_half_hour')
    return (
      <Notice tone="caution" title="Caution">
        This site works to the OSHA half hour (29 CFR 1910.252(a)(2)(iii)(B)). NFPA 51B (2019 edition, §5.6.1.1) requires a fire watch of at least 60 minutes after hot work.
      </Notice>
    );
  return <p className="text-xs text-ink-soft">NFPA 51B (2019 edition, §5.6.1.1) requires a fire watch of at least 60 minutes after hot work, ended by the fire watcher&apos;s closing check.</p>;
}
