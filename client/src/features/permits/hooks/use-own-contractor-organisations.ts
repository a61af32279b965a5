import { useMe } from '@client/features/auth';

/** The contractor organisations in which the user is a contractor lead in the active tenant. */
export function useOwnContractorOrganisations(): string[] {
  const { data: me } = useMe();
  if (!me) return [];
  return [...new Set(me.memberships.filter((m) => m.tenantId === me.activeTenantId && m.role === 'contractor_lead').map((m) => m.organisationId))];
}
