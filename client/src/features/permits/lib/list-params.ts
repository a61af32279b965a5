import type { PermitsQuery } from '@shared/schemas/permit.schema';

/** True when any filter (not page or sort) narrows the list. */
export const hasFilters = (q: PermitsQuery) => Boolean(q.state?.length || q.pipelineId || q.contractorOrganisationId || q.kind || q.from || q.to || q.q);
