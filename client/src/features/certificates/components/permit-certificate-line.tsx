import { Link } from 'react-router-dom';
import { isCertificateLive } from '@shared/isolations/certificate-states';
import { useAbility } from '@client/lib/ability';
import { useCertificates } from '../api/get-certificates';

/**
 * The permit page's one line about the isolation certificate the permit works under (HSE HSG250: the
 * permit cross-references the certificate): its number, linked, and whether it is live.
 */
export function PermitCertificateLine({ permitId }: { permitId: string }) {
  const ability = useAbility();
  const allowed = ability.can('read', 'IsolationCertificate');
  const list = useCertificates({ permitId, pageSize: 5 }, allowed);
  const c = list.data?.items[0];
  if (!allowed || !c) return null;
  const state = !isCertificateLive(c) ? 'returned' : c.problem ? 'failed its last re-check' : c.longTerm ? 'long-term, live' : 'live';
  return (
    <p className={`text-sm ${c.problem ? 'font-semibold text-danger' : ''}`} data-testid="permit-certificate">
      Isolation certificate:{' '}
      <Link to={`/certificates/${c.id}`} className="inline-flex min-h-11 items-center font-semibold text-brand underline">
        {c.number}
      </Link>{' '}
      ({state})
    </p>
  );
}
