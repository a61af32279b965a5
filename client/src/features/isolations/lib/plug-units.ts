import { plugUnits } from '@shared/calc';
import { useMe } from '@client/features/auth';

/** The plug's weights, water and lengths in the signed-in tenant's units (kg and litres where it works in kilometres). */
export function usePlugUnits() {
  const { data: me } = useMe();
  return plugUnits(me?.activeTenant?.locationUnit === 'km');
}
