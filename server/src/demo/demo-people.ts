import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import type { Role, QualificationKind } from '@shared/abilities/roles';

/** Demo password for every demo account (listed in the README and on the sign-in page outside production). */
export const DEMO_PASSWORD = 'holdpoint-demo';

// All names, companies and places are invented.
export const demoTenants = [
  {
    slug: 'bramblecote',
    name: 'Bramblecote Midstream',
    timeZone: 'America/Chicago',
    locationUnit: 'mi' as const,
    organisations: [
      { key: 'operator', name: 'Bramblecote Midstream', kind: 'operator' as const },
      { key: 'oxbow', name: 'Oxbow Line Repair', kind: 'contractor' as const },
    ],
  },
  {
    slug: 'harlowridge',
    name: 'Harlow Ridge Gas',
    timeZone: 'America/Denver',
    locationUnit: 'km' as const,
    organisations: [
      { key: 'operator', name: 'Harlow Ridge Gas', kind: 'operator' as const },
      { key: 'oxbow', name: 'Oxbow Line Repair', kind: 'contractor' as const },
    ],
  },
];

export const demoPeople: { email: string; name: string; memberships: { tenant: string; org: string; role: Role }[]; qualifications: { tenant: string; kind: QualificationKind; expiresInDays: number }[] }[] = [
  { email: 'admin@bramblecote.example', name: 'Dana Whitcombe', memberships: [{ tenant: 'bramblecote', org: 'operator', role: 'tenant_admin' }], qualifications: [] },
  {
    email: 'authoriser@bramblecote.example',
    name: 'Priya Castellan',
    memberships: [{ tenant: 'bramblecote', org: 'operator', role: 'authoriser' }],
    qualifications: [{ tenant: 'bramblecote', kind: 'isolation_verifier', expiresInDays: 400 }],
  },
  {
    email: 'authoriser2@bramblecote.example',
    name: 'Marcus Tellford',
    memberships: [{ tenant: 'bramblecote', org: 'operator', role: 'authoriser' }],
    qualifications: [{ tenant: 'bramblecote', kind: 'isolation_verifier', expiresInDays: 20 }],
  },
  { email: 'control@bramblecote.example', name: 'Jo Hartnell', memberships: [{ tenant: 'bramblecote', org: 'operator', role: 'control_room' }], qualifications: [] },
  {
    email: 'lead@oxbow-repair.example',
    name: 'Rory Kilbride',
    memberships: [{ tenant: 'bramblecote', org: 'oxbow', role: 'contractor_lead' }],
    qualifications: [
      { tenant: 'bramblecote', kind: 'hot_work_holder', expiresInDays: 300 },
      { tenant: 'bramblecote', kind: 'cold_work_holder', expiresInDays: 300 },
      { tenant: 'bramblecote', kind: 'lockout_tagout', expiresInDays: 300 },
    ],
  },
  {
    email: 'tech@oxbow-repair.example',
    name: 'Sam Ferrand',
    memberships: [
      { tenant: 'bramblecote', org: 'oxbow', role: 'isolation_technician' },
      { tenant: 'bramblecote', org: 'oxbow', role: 'gas_tester' },
    ],
    qualifications: [
      { tenant: 'bramblecote', kind: 'gas_tester', expiresInDays: 25 },
      { tenant: 'bramblecote', kind: 'lockout_tagout', expiresInDays: 200 },
      { tenant: 'bramblecote', kind: 'isolation_verifier', expiresInDays: 200 },
    ],
  },
  {
    email: 'tech2@oxbow-repair.example',
    name: 'Ana Lisgar',
    memberships: [{ tenant: 'bramblecote', org: 'oxbow', role: 'isolation_technician' }],
    qualifications: [
      { tenant: 'bramblecote', kind: 'lockout_tagout', expiresInDays: 150 },
      { tenant: 'bramblecote', kind: 'isolation_verifier', expiresInDays: 150 },
    ],
  },
  { email: 'auditor@bramblecote.example', name: 'Hollis Brandt', memberships: [{ tenant: 'bramblecote', org: 'operator', role: 'auditor' }], qualifications: [] },
  { email: 'authoriser@harlowridge.example', name: 'Wren Ashdown', memberships: [{ tenant: 'harlowridge', org: 'operator', role: 'authoriser' }], qualifications: [] },
];

/**
 * Harlow Ridge's crew for its group-lockout demo (issue 16): seeded with the demo permits only, so the
 * tests' template (people without permits) stays as it was. Wren gets the verifier's qualification there.
 */
export const demoCrewPeople: typeof demoPeople = [
  {
    email: 'authoriser@harlowridge.example',
    name: 'Wren Ashdown',
    memberships: [{ tenant: 'harlowridge', org: 'operator', role: 'authoriser' }],
    qualifications: [{ tenant: 'harlowridge', kind: 'isolation_verifier', expiresInDays: 300 }],
  },
  { email: 'control@harlowridge.example', name: 'Odile Varga', memberships: [{ tenant: 'harlowridge', org: 'operator', role: 'control_room' }], qualifications: [] },
  {
    email: 'hr-lead@oxbow-repair.example',
    name: 'Tomas Reyburn',
    memberships: [{ tenant: 'harlowridge', org: 'oxbow', role: 'contractor_lead' }],
    qualifications: [
      { tenant: 'harlowridge', kind: 'cold_work_holder', expiresInDays: 280 },
      { tenant: 'harlowridge', kind: 'lockout_tagout', expiresInDays: 280 },
    ],
  },
  {
    email: 'hr-tech@oxbow-repair.example',
    name: 'Ines Calloway',
    memberships: [{ tenant: 'harlowridge', org: 'oxbow', role: 'isolation_technician' }],
    qualifications: [
      { tenant: 'harlowridge', kind: 'lockout_tagout', expiresInDays: 220 },
      { tenant: 'harlowridge', kind: 'isolation_verifier', expiresInDays: 220 },
    ],
  },
  {
    email: 'hr-tech2@oxbow-repair.example',
    name: 'Bea Morrow',
    memberships: [{ tenant: 'harlowridge', org: 'oxbow', role: 'isolation_technician' }],
    qualifications: [
      { tenant: 'harlowridge', kind: 'lockout_tagout', expiresInDays: 180 },
      { tenant: 'harlowridge', kind: 'isolation_verifier', expiresInDays: 180 },
    ],
  },
];

export interface SeededIds {
  tenants: Record<string, string>;
  organisations: Record<string, Record<string, string>>;
  users: Record<string, string>;
}

/** Idempotent: a second run finds every row by its natural key and changes nothing. */
export async function seedPeople(sequelize: Sequelize, passwordHash: string, t: Transaction, people = demoPeople): Promise<SeededIds> {
  const ids: SeededIds = { tenants: {}, organisations: {}, users: {} };
  const one = async <R extends object = { id: string }>(sql: string, replacements: Record<string, unknown>): Promise<R> =>
    (await sequelize.query<R>(sql, { replacements, type: QueryTypes.SELECT, transaction: t }))[0]!;

  for (const tenant of demoTenants) {
    const row = await one<{ id: string }>(
      // Each demo tenant mails its signed audit checkpoints to a records address on its own domain (shown in the demo's mail catcher); one set by hand is kept.
      `INSERT INTO tenants (name, slug, time_zone, location_unit, settings) VALUES (:name, :slug, :tz, :unit, jsonb_build_object('recordsEmail', CAST(:records AS text)))
       ON CONFLICT (slug) DO UPDATE SET name = EXCLUDED.name, settings = EXCLUDED.settings || coalesce(tenants.settings, '{}'::jsonb) RETURNING id`,
      { name: tenant.name, slug: tenant.slug, tz: tenant.timeZone, unit: tenant.locationUnit, records: `records@${tenant.slug}.example` },
    );
    ids.tenants[tenant.slug] = row.id;
    ids.organisations[tenant.slug] = {};
    for (const org of tenant.organisations) {
      const o = await one<{ id: string }>(
        `INSERT INTO organisations (tenant_id, name, kind) VALUES (:tenantId, :name, :kind)
         ON CONFLICT (tenant_id, name) DO UPDATE SET kind = EXCLUDED.kind RETURNING id`,
        { tenantId: row.id, name: org.name, kind: org.kind },
      );
      ids.organisations[tenant.slug][org.key] = o.id;
    }
  }

  const today = new Date();
  for (const person of people) {
    const existing = (await one<{ id: string }>(`SELECT id FROM users WHERE lower(email) = lower(:email)`, { email: person.email })) as { id: string } | undefined;
    const userId =
      existing?.id ??
      (await one<{ id: string }>(`INSERT INTO users (email, name, password_hash) VALUES (:email, :name, :hash) RETURNING id`, { email: person.email, name: person.name, hash: passwordHash })).id;
    ids.users[person.email] = userId;
    for (const m of person.memberships) {
      await sequelize.query(
        `INSERT INTO memberships (tenant_id, organisation_id, user_id, role) VALUES (:tenantId, :orgId, :userId, :role)
         ON CONFLICT (tenant_id, user_id, organisation_id, role) DO NOTHING`,
        { replacements: { tenantId: ids.tenants[m.tenant], orgId: ids.organisations[m.tenant][m.org], userId, role: m.role }, transaction: t },
      );
    }
    for (const q of person.qualifications) {
      const has = await one<{ one: number }>(`SELECT 1 AS one FROM qualifications WHERE tenant_id = :tenantId AND user_id = :userId AND kind = :kind`, { tenantId: ids.tenants[q.tenant], userId, kind: q.kind });
      if (has as unknown) continue;
      const issued = new Date(today.getTime() - 365 * 86_400_000);
      const expires = new Date(today.getTime() + q.expiresInDays * 86_400_000);
      await sequelize.query(
        `INSERT INTO qualifications (tenant_id, user_id, kind, reference, issued_on, expires_on) VALUES (:tenantId, :userId, :kind, :ref, :issued, :expires)`,
        {
          replacements: { tenantId: ids.tenants[q.tenant], userId, kind: q.kind, ref: `CERT-${q.kind.slice(0, 3).toUpperCase()}-${userId.slice(0, 4)}`, issued: issued.toISOString().slice(0, 10), expires: expires.toISOString().slice(0, 10) },
          transaction: t,
        },
      );
    }
  }
  return ids;
}
