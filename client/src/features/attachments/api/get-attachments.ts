import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { AttachmentSummary } from '@shared/types/attachments';
import type { Page } from '@shared/schemas/common.schema';
import { api, qs } from '@client/lib/api-client';

export const attachmentsKey = (permitId: string) => ['attachments', 'permit', permitId] as const;

export const getAttachmentsQueryOptions = (permitId: string, page = 1, pageSize = 10) =>
  queryOptions({
    queryKey: [...attachmentsKey(permitId), { page, pageSize }] as const,
    queryFn: () => api.get<Page<AttachmentSummary>>(`/api/permits/${encodeURIComponent(permitId)}/attachments${qs({ page, pageSize })}`),
    placeholderData: keepPreviousData,
  });

export const useAttachments = (permitId: string, page = 1) => useQuery(getAttachmentsQueryOptions(permitId, page));
