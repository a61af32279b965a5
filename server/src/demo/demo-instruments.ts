import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import type { DemoSeeder } from './registry';

// Invented monitor models and serial numbers. "Today" moves: the in-date monitor is bump-tested at
// the moment of seeding, so a demo left running past midnight at the site needs a new bump test
// (Instruments page, as an authoriser or tenant admin) before gas tests are accepted again.
const demoInstruments: { tenant: string; model: string; serial: string; bumpedNow: boolean; calibratedDaysAgo: number; calibrationDaysLeft: number }[] = [
  { tenant: 'bramblecote', model: 'Fenmark G4 four-gas monitor', serial: 'FG4-20731', bumpedNow: true, calibratedDaysAgo: 40, calibrationDaysLeft: 140 },
  // Past its calibration due date: shows the refusal and the highlight on the Instruments page.
  { tenant: 'bramblecote', model: 'Tally Q4 four-gas monitor', serial: 'TQ4-00418', bumpedNow: false, calibratedDaysAgo: 190, calibrationDaysLeft: -10 },
  { tenant: 'harlowridge', model: 'Fenmark G4 four-gas monitor', serial: 'FG4-31190', bumpedNow: true, calibratedDaysAgo: 20, calibrationDaysLeft: 160 },
];

/** Idempotent: an instrument is found by its serial number and left as it is. */
export const seedInstruments: DemoSeeder = async (sequelize: Sequelize, ids, t: Transaction) => {
  for (const inst of demoInstruments) {
    const tenantId = ids.tenants[inst.tenant];
    const exists = await sequelize.query(`SELECT 1 FROM instruments WHERE tenant_id = :tenantId AND serial = :serial`, { replacements: { tenantId, serial: inst.serial }, type: QueryTypes.SELECT, transaction: t });
    if (exists.length) continue;
    await sequelize.query(
      `INSERT INTO instruments (tenant_id, model, serial, last_bump_test_at, last_calibrated_on, calibration_due_on)
       VALUES (:tenantId, :model, :serial, CASE WHEN :bumped THEN now() ELSE now() - interval '3 days' END,
               CAST(now() AS date) - CAST(:ago AS integer), CAST(now() AS date) + CAST(:left AS integer))`,
      { replacements: { tenantId, model: inst.model, serial: inst.serial, bumped: inst.bumpedNow, ago: inst.calibratedDaysAgo, left: inst.calibrationDaysLeft }, transaction: t },
    );
  }
};
