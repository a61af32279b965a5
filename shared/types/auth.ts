import type { OrganisationKind, Role } from '../abilities/roles';
import type { LocationUnit } from '../schemas/assets.schema';

/** GET /api/auth/me, and the answer of signing in and of switching tenant. */
export interface MeResponse {
  user: { id: string; email: string; name: string };
  memberships: { id: string; tenantId: string; tenantName: string; organisationId: string; organisationName: string; organisationKind: OrganisationKind; role: Role }[];
  activeTenantId: string | null;
  activeTenant: { id: string; name: string; timeZone: string; locationUnit: LocationUnit } | null;
  /** The caller's packed CASL rules in the active tenant. */
  rules: unknown[];
}
