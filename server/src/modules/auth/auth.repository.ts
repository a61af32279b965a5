import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import type { MeResponse } from '@shared/types/auth';
import { withTenant } from '../../db/sequelize';

export interface UserRow {
  id: string;
  email: string;
  name: string;
  password_hash: string | null;
  disabled_at: Date | null;
}

export async function findUserByEmail(sequelize: Sequelize, email: string, transaction?: Transaction) {
  const rows = await sequelize.query<UserRow>(`SELECT id, email, name, password_hash, disabled_at FROM users WHERE lower(email) = lower(:email)`, {
    replacements: { email },
    type: QueryTypes.SELECT,
    transaction,
  });
  return rows[0] ?? null;
}

export async function tenantSummary(sequelize: Sequelize, tenantId: string): Promise<MeResponse['activeTenant']> {
  const rows = await withTenant(sequelize, tenantId, () => sequelize.query<{ id: string; name: string; timeZone: string; locationUnit: 'mi' | 'km' }>(
    `SELECT id, name, time_zone AS "timeZone", location_unit AS "locationUnit" FROM tenants WHERE id = :tenantId`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  ));
  return rows[0] ?? null;
}
