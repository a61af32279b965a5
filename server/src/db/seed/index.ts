import type { Sequelize } from 'sequelize';
import { hashPassword } from '../../lib/passwords';
import { DEMO_PASSWORD, seedPeople, type SeededIds } from './demo-people';
import { demoSeeders } from './registry';

/** Seeds the whole demo in one transaction; safe to run again. */
export async function seedDemo(sequelize: Sequelize): Promise<SeededIds> {
  const hash = await hashPassword(DEMO_PASSWORD);
  return sequelize.transaction(async (t) => {
    const ids = await seedPeople(sequelize, hash, t);
    for (const seeder of demoSeeders) await seeder(sequelize, ids, t);
    return ids;
  });
}
