import { queryOptions, useQuery } from '@tanstack/react-query';
import { api, ApiError } from '@client/lib/api-client';

/** What the calculator needs from a register entry. */
export interface PipelineChoice {
  id: string;
  code: string | null;
  name: string;
  nps: number | null;
  schedule: string | null;
  insideDiameterIn: number | null;
}

export interface PipelineChoices {
  items: PipelineChoice[];
  total: number;
}

const PAGE_SIZE = 200;

/** "BM-10 · Cedar Run Lateral", or just the name when it already carries the code. */
export const pipelineLabel = (p: PipelineChoice) => (p.code && !p.name.toUpperCase().includes(p.code.toUpperCase()) ? `${p.code} · ${p.name}` : p.name);

const num = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : typeof v === 'string' && v.trim() !== '' && Number.isFinite(Number(v)) ? Number(v) : null);
const text = (v: unknown) => (typeof v === 'string' && v.trim() !== '' ? v : null);

// Read field by field so a register answer that differs a little (or is missing) leaves manual entry working.
function toChoice(raw: unknown): PipelineChoice | null {
  if (!raw || typeof raw !== 'object') return null;
  const r = raw as Record<string, unknown>;
  const id = text(r.id);
  if (!id) return null;
  const code = text(r.code);
  return {
    id,
    code,
    name: text(r.name) ?? code ?? 'Unnamed pipeline',
    nps: num(r.nps),
    schedule: text(r.schedule),
    insideDiameterIn: num(r.insideDiameterIn ?? r.idIn),
  };
}

export const getPipelineChoicesQueryOptions = () =>
  queryOptions({
    queryKey: ['pipelines', 'calculator-choices'],
    queryFn: async (): Promise<PipelineChoices> => {
      try {
        const page = await api.get<{ items?: unknown[]; total?: number }>(`/api/pipelines?page=1&pageSize=${PAGE_SIZE}`);
        const items = (page.items ?? []).map(toChoice).filter((p): p is PipelineChoice => p !== null);
        return { items, total: typeof page.total === 'number' ? page.total : items.length };
      } catch (err) {
        // A register not built yet (404) or not readable reads as an empty one: the size can still be typed.
        if (err instanceof ApiError && (err.status === 404 || err.status === 403)) return { items: [], total: 0 };
        throw err;
      }
    },
  });

export const usePipelineChoices = () => useQuery(getPipelineChoicesQueryOptions());
