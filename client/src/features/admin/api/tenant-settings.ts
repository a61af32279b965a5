import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { TenantSettingsInput } from '@shared/schemas/tenant-settings-input.schema';
import type { TenantSettingsView } from '@shared/types/tenant-settings';
import { api } from '@client/lib/api-client';

export const getTenantSettingsQueryOptions = () => queryOptions({ queryKey: ['admin', 'tenant-settings'], queryFn: () => api.get<TenantSettingsView>('/api/tenant/settings') });
export const useTenantSettings = () => useQuery(getTenantSettingsQueryOptions());

export function useChangeTenantSettings() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: TenantSettingsInput) => api.patch<TenantSettingsView>('/api/tenant/settings', input),
    onSuccess: (settings) => {
      qc.setQueryData(getTenantSettingsQueryOptions().queryKey, settings);
      // The site's zone travels with the signed-in person's tenant; every time on screen follows it.
      void qc.invalidateQueries({ queryKey: ['auth', 'me'] });
    },
  });
}
