import type { Sequelize } from 'sequelize';
import { hashPassword } from '../lib/passwords';
import { DEMO_PASSWORD, demoCrewPeople, seedPeople, type SeededIds } from './demo-people';
import { demoSeeders } from './registry';
import { seedPermits } from './demo-permits';
import { seedGroupLockout } from './demo-group-lockout';

/**
 * Seeds the demo in one transaction; safe to run again. `permits: false` leaves out the demo permits
 * (the test template starts without them so each test owns its permits).
 */
export async function seedDemo(sequelize: Sequelize, options: { permits?: boolean } = {}): Promise<SeededIds> {
  const hash = await hashPassword(DEMO_PASSWORD);
  return sequelize.transaction(async (t) => {
    const ids = await seedPeople(sequelize, hash, t);
    for (const seeder of demoSeeders) await seeder(sequelize, ids, t);
    if (options.permits !== false) {
      await seedPermits(sequelize, ids, t);
      Object.assign(ids.users, (await seedPeople(sequelize, hash, t, demoCrewPeople)).users);
      await seedGroupLockout(sequelize, ids, t);
    }
    return ids;
  });
}
