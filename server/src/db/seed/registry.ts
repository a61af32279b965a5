import type { Sequelize, Transaction } from 'sequelize';
import type { SeededIds } from './demo-people';

export type DemoSeeder = (sequelize: Sequelize, ids: SeededIds, t: Transaction) => Promise<void>;

/** Each feature adds its demo seeder here, in dependency order. */
export const demoSeeders: DemoSeeder[] = [];
