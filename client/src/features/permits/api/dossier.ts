import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { DossierJob } from '@shared/types/dossier';
import { api } from '@client/lib/api-client';

const dossierKey = (permitId: string, jobId: string) => ['permits', permitId, 'dossier', jobId] as const;

/** A dossier build, asked again each second while it runs. */
export const useDossierJob = (permitId: string, job: DossierJob | null) =>
  useQuery({
    queryKey: dossierKey(permitId, job?.id ?? 'none'),
    queryFn: () => api.get<DossierJob>(`/api/permits/${encodeURIComponent(permitId)}/dossier/${encodeURIComponent(job!.id)}`),
    enabled: Boolean(job),
    initialData: job ?? undefined,
    refetchInterval: (q) => (q.state.data?.state === 'running' ? 1_000 : false),
  });

export function useStartDossier(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.post<DossierJob>(`/api/permits/${encodeURIComponent(permitId)}/dossier`),
    onSuccess: (job) => qc.setQueryData(dossierKey(permitId, job.id), job),
  });
}
