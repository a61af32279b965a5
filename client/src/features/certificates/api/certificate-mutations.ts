import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { LinkCertificateInput, MarkLongTermInput, RecordRecheckInput } from '@shared/schemas/certificates.schema';
import type { IsolationCertificate, PermitCertificateRef } from '@shared/types/certificates';
import { api } from '@client/lib/api-client';
import { certificatesKey } from './get-certificates';

const path = (id: string, what: 'long-term' | 'rechecks' | 'return') => `/api/certificates/${encodeURIComponent(id)}/${what}`;

/** Any change to a certificate changes its page, the list and the permits that show it: read them again. */
function useCertificateMutation<T>(send: (input: T) => Promise<IsolationCertificate | PermitCertificateRef>) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: send, onSuccess: () => qc.invalidateQueries({ queryKey: certificatesKey }) });
}

export const useMarkLongTerm = (id: string) => useCertificateMutation((input: MarkLongTermInput) => api.post<IsolationCertificate>(path(id, 'long-term'), input));
export const useRecordRecheck = (id: string) => useCertificateMutation((input: RecordRecheckInput) => api.post<IsolationCertificate>(path(id, 'rechecks'), input));
export const useReturnCertificate = (id: string) => useCertificateMutation(() => api.post<IsolationCertificate>(path(id, 'return'), {}));
/** A permit in planning relies on a live certificate. */
export const useLinkCertificate = (permitId: string) =>
  useCertificateMutation((input: LinkCertificateInput) => api.post<PermitCertificateRef>(`/api/permits/${encodeURIComponent(permitId)}/certificate`, input));
