import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { InviteInput, OrganisationInput, QualificationInput, UsersQuery } from '@shared/schemas/auth.schema';
import type { Page } from '@shared/schemas/common.schema';
import type { Role } from '@shared/abilities/roles';
import type { MembershipRow, OrganisationRow, QualificationRow, UserRow } from '@shared/types/admin';
import { api, qs } from '@client/lib/api-client';

export const getUsersQueryOptions = (q: Partial<UsersQuery>) =>
  queryOptions({ queryKey: ['admin', 'users', q], queryFn: () => api.get<Page<UserRow>>(`/api/users${qs(q)}`), placeholderData: keepPreviousData });
export const useUsers = (q: Partial<UsersQuery>) => useQuery(getUsersQueryOptions(q));

export const getOrganisationsQueryOptions = (page = 1, pageSize = 100) =>
  queryOptions({ queryKey: ['admin', 'organisations', page, pageSize], queryFn: () => api.get<Page<OrganisationRow>>(`/api/organisations${qs({ page, pageSize })}`) });
export const useOrganisations = (page = 1, pageSize = 100) => useQuery(getOrganisationsQueryOptions(page, pageSize));

export const getQualificationsQueryOptions = (page: number) =>
  queryOptions({ queryKey: ['admin', 'qualifications', page], queryFn: () => api.get<Page<QualificationRow>>(`/api/qualifications${qs({ page, pageSize: 50 })}`), placeholderData: keepPreviousData });
export const useQualifications = (page: number) => useQuery(getQualificationsQueryOptions(page));

export function useCreateOrganisation() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (input: OrganisationInput) => api.post<OrganisationRow>('/api/organisations', input), onSuccess: () => qc.invalidateQueries({ queryKey: ['admin', 'organisations'] }) });
}
export function useInvite() {
  return useMutation({ mutationFn: (input: InviteInput) => api.post<{ email: string }>('/api/invitations', input) });
}
export function useChangeRole() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ membershipId, role }: { membershipId: string; role: Role }) => api.patch<MembershipRow>(`/api/memberships/${membershipId}`, { role }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['admin', 'users'] }),
  });
}
export function useCreateQualification() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (input: QualificationInput) => api.post('/api/qualifications', input), onSuccess: () => qc.invalidateQueries({ queryKey: ['admin', 'qualifications'] }) });
}
