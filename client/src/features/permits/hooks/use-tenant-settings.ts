import { useMe } from '@client/features/auth';

/** The tenant's time zone and position unit, with safe fallbacks while /me loads. */
export function useTenantSettings() {
  const { data: me } = useMe();
  return {
    timeZone: me?.activeTenant?.timeZone ?? 'UTC',
    unit: me?.activeTenant?.locationUnit ?? 'mi',
  } as const;
}
