import { Link } from 'react-router-dom';
import { formatInZone } from '@shared/time/zone';
import { liveCertificateState } from '@shared/isolations/certificate-states';
import { useAbility } from '@client/lib/ability';
import { useCertificates } from '../api/get-certificates';

/** For the control room's board: each long-term isolation with its next re-check, overdue ones in the danger colour. */
export function LongTermRechecks({ timeZone }: { timeZone: string }) {
  const allowed = useAbility().can('read', 'IsolationCertificate');
  const list = useCertificates({ state: liveCertificateState, longTerm: 'true', pageSize: 20 }, allowed);
  if (!allowed || !list.data?.items.length) return null;
  return (
    <ul className="flex flex-col gap-1 text-sm" aria-label="Long-term isolations">
      {list.data.items.map((c) => (
        <li key={c.id} className={c.recheckOverdue || c.problem ? 'font-semibold text-danger' : ''} data-testid="long-term-recheck">
          Long-term isolation{' '}
          <Link to={`/certificates/${c.id}`} className="inline-flex min-h-11 items-center text-brand underline">
            {c.number}
          </Link>{' '}
          ({c.pipelineName}): {c.problem ? `failed its last re-check: ${c.problem}` : `re-check ${c.recheckOverdue ? 'overdue since' : 'due'} ${formatInZone(c.nextRecheckDue, timeZone)}`}
        </li>
      ))}
    </ul>
  );
}
