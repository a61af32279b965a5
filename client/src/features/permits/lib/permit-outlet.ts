import { useOutletContext } from 'react-router-dom';
import type { PermitDetail } from '@shared/types/permits';

/** What the permit page hands its summary and sections: the permit as loaded, and a way to load it again. */
export interface PermitOutlet {
  permit: PermitDetail;
  refetch: () => void;
}

export const usePermitOutlet = () => useOutletContext<PermitOutlet>();
