import type { PermitDetail } from '@shared/types/permits';
import { linkButtonClass } from './link-button';

/** The printable permit for the work site; the browser downloads it with the session cookie. */
export function PrintPermitLink({ permit }: { permit: Pick<PermitDetail, 'id' | 'number'> }) {
  return (
    <a href={`/api/permits/${encodeURIComponent(permit.id)}/pdf`} download={`${permit.number}.pdf`} className={`${linkButtonClass.secondary} w-full`}>
      Print permit
    </a>
  );
}
