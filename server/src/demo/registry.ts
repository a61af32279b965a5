import type { Sequelize, Transaction } from 'sequelize';
import type { SeededIds } from './demo-people';
import { seedAssets } from './demo-assets';
import { seedChecklists } from './demo-checklists';
import { seedInstruments } from './demo-instruments';

export type DemoSeeder = (sequelize: Sequelize, ids: SeededIds, t: Transaction) => Promise<void>;

/** Each feature adds its demo seeder here, in dependency order. */
export const demoSeeders: DemoSeeder[] = [seedAssets, seedChecklists, seedInstruments];
