import { editableStates } from '@shared/permit/states';
import type { PermitDetail } from '@shared/types/permits';
import { DossierAction } from './dossier-action';
import { linkButtonClass } from './link-button';

/** The printable permit for the work site; the browser downloads it with the session cookie. Beside it, the whole dossier. */
export function PrintPermitLink({ permit }: { permit: Pick<PermitDetail, 'id' | 'number' | 'state'> }) {
  return (
    <>
      <a href={`/api/permits/${encodeURIComponent(permit.id)}/pdf`} download={`${permit.number}.pdf`} className={`${linkButtonClass.secondary} w-full`}>
        Print permit
      </a>
      {/* A permit still being written has no record yet, so no dossier. */}
      {editableStates.includes(permit.state) ? null : <DossierAction permit={permit} />}
    </>
  );
}
