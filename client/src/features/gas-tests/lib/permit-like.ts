import { workOpenStates, type PermitState, type WorkKind } from '@shared/permit/states';

/** What the gas-test sections need of a permit; the permit page's record has all of it. */
export interface PermitLike {
  id: string;
  tenantId: string;
  number: string;
  state: PermitState;
  kinds: WorkKind[];
  contractorOrganisationId: string;
  holderUserId: string | null;
  contractorLeadUserId: string | null;
}

/** CASL subject fields of the permit's records (gas tests, checks): the same scope as the permit. */
export const scopeOf = (p: PermitLike) => ({ tenantId: p.tenantId, contractorOrganisationId: p.contractorOrganisationId });

export const workOpen = (p: PermitLike) => workOpenStates.includes(p.state);
