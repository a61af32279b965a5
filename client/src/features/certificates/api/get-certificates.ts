import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { CertificatesQuery } from '@shared/schemas/certificates.schema';
import type { IsolationCertificateSummary } from '@shared/types/certificates';
import { api, qs } from '@client/lib/api-client';

/** Every certificate query starts with this key; mutations invalidate it. */
export const certificatesKey = ['certificates'] as const;

export const getCertificatesQueryOptions = (params: Partial<CertificatesQuery>) =>
  queryOptions({
    queryKey: [...certificatesKey, 'list', params],
    queryFn: () => api.get<Page<IsolationCertificateSummary>>(`/api/certificates${qs(params)}`),
    placeholderData: keepPreviousData,
  });

export const useCertificates = (params: Partial<CertificatesQuery>, enabled = true) => useQuery({ ...getCertificatesQueryOptions(params), enabled });
