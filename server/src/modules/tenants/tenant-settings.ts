import { QueryTypes, type Sequelize } from 'sequelize';
import { readTenantSettings, type TenantSettings } from '@shared/schemas/tenant-settings.schema';

export async function loadTenantSettings(sequelize: Sequelize, tenantId: string): Promise<TenantSettings & { timeZone: string; locationUnit: 'mi' | 'km' }> {
  const [row] = await sequelize.query<{ settings: unknown; time_zone: string; location_unit: 'mi' | 'km' }>(
    `SELECT settings, time_zone, location_unit FROM tenants WHERE id = :tenantId`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  );
  return { ...readTenantSettings(row?.settings), timeZone: row?.time_zone ?? 'UTC', locationUnit: row?.location_unit ?? 'mi' };
}
