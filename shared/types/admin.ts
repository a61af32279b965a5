import type { OrganisationKind, Role } from '../abilities/roles';

// What the tenant administration API answers, written once for the server and the client.

/** One row of GET /api/organisations, and the answer of POST. */
export interface OrganisationRow {
  id: string;
  tenantId: string;
  name: string;
  kind: OrganisationKind;
  members: number;
}

/** One row of GET /api/users: one per membership, so a person with two roles has two rows. */
export interface UserRow {
  membershipId: string;
  userId: string;
  name: string;
  email: string;
  role: Role;
  organisationId: string;
  organisationName: string;
  organisationKind: OrganisationKind;
}

/** A person to pick in a form (a lock holder, a contractor lead), from GET /api/users. */
export type PersonOption = Pick<UserRow, 'userId' | 'name'>;

/** PATCH /api/memberships/:id. */
export interface MembershipRow {
  id: string;
  tenantId: string;
  userId: string;
  organisationId: string;
  role: Role;
}

/** One row of GET /api/qualifications. */
export interface QualificationRow {
  id: string;
  tenantId: string;
  userId: string;
  userName: string;
  kind: string;
  reference: string | null;
  issuedOn: string;
  expiresOn: string;
}
