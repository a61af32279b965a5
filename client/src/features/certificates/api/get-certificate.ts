import { queryOptions, useQuery } from '@tanstack/react-query';
import type { IsolationCertificate } from '@shared/types/certificates';
import { api } from '@client/lib/api-client';
import { certificatesKey } from './get-certificates';

export const certificateKey = (id: string) => [...certificatesKey, 'one', id] as const;

export const getCertificateQueryOptions = (id: string) =>
  queryOptions({ queryKey: certificateKey(id), queryFn: () => api.get<IsolationCertificate>(`/api/certificates/${encodeURIComponent(id)}`) });

export const useCertificate = (id: string) => useQuery(getCertificateQueryOptions(id));
