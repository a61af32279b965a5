import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { AcceptInvitationInput, ResetPasswordInput, SignInInput } from '@shared/schemas/auth.schema';
import type { MeResponse } from '@shared/types/auth';
import { api } from '@client/lib/api-client';
import { getMeQueryOptions } from './get-me';

// Drop every cached answer of the previous user or tenant, but keep the "me" query itself so the
// components already watching it (the ability provider) see the new value.
const forgetOtherQueries = (qc: ReturnType<typeof useQueryClient>) => qc.removeQueries({ predicate: (q) => q.queryKey[0] !== 'auth' });

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SignInInput) => api.post<MeResponse>('/api/auth/sign-in', input),
    onSuccess: (me) => {
      forgetOtherQueries(qc);
      qc.setQueryData(getMeQueryOptions().queryKey, me);
    },
  });
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.post<void>('/api/auth/sign-out'),
    onSettled: () => {
      api.resetCsrf();
      forgetOtherQueries(qc);
      qc.setQueryData(getMeQueryOptions().queryKey, null);
    },
  });
}

export function useSwitchTenant() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (tenantId: string) => api.post<MeResponse>('/api/auth/switch-tenant', { tenantId }),
    onSuccess: (me) => {
      forgetOtherQueries(qc);
      qc.setQueryData(getMeQueryOptions().queryKey, me);
    },
  });
}

export const useAcceptInvitation = () => useMutation({ mutationFn: (input: AcceptInvitationInput) => api.post('/api/auth/accept-invitation', input) });
export const useForgotPassword = () => useMutation({ mutationFn: (email: string) => api.post<{ message: string }>('/api/auth/forgot-password', { email }) });
export const useResetPassword = () => useMutation({ mutationFn: (input: ResetPasswordInput) => api.post('/api/auth/reset-password', input) });
