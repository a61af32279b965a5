/**
 * Whether a gas monitor may be used for a test at a given time. A monitor past its calibration due
 * date is refused (manufacturers' instructions and common practice; the due date is whatever the
 * tenant records from the calibration certificate). With the tenant rule requireDailyBumpTest the
 * monitor must also have been bump-tested on the same calendar day at the site, before the test
 * (common practice, no single published source).
 */
import { daysBetween, siteDay, siteTimeOfDay } from '../time/zone';

export interface InstrumentDates {
  model: string;
  serial: string;
  lastBumpTestAt: Date | string | null;
  lastCalibratedOn: string | null;
  /** "YYYY-MM-DD": the last day the calibration holds. */
  calibrationDueOn: string;
  retiredAt?: Date | string | null;
}

export type CalibrationStatus = 'in_date' | 'due_soon' | 'overdue';
export type BumpStatus = 'today' | 'not_today' | 'never' | 'after_test';

export interface InstrumentStatus {
  usable: boolean;
  calibration: CalibrationStatus;
  /** Days until the calibration due date at the site (negative once past). */
  calibrationDaysLeft: number;
  bump: BumpStatus;
  /** Why the monitor may not be used, one sentence each. */
  reasons: string[];
}

/** Calibration due within this many days is highlighted (common practice, no published source). */
export const CALIBRATION_WARNING_DAYS = 14;

export const instrumentName = (i: Pick<InstrumentDates, 'model' | 'serial'>) => `${i.model} (serial ${i.serial})`;

export function instrumentStatus(inst: InstrumentDates, at: Date, timeZone: string, requireDailyBumpTest: boolean): InstrumentStatus {
  const day = siteDay(at, timeZone);
  const daysLeft = daysBetween(day, inst.calibrationDueOn);
  const calibration: CalibrationStatus = daysLeft < 0 ? 'overdue' : daysLeft <= CALIBRATION_WARNING_DAYS ? 'due_soon' : 'in_date';
  const name = instrumentName(inst);
  const reasons: string[] = [];
  if (inst.retiredAt) reasons.push(`${name} is retired from use.`);
  if (calibration === 'overdue')
    reasons.push(`${name} was due for calibration on ${inst.calibrationDueOn}; it may not be used for a gas test until it is calibrated again.`);

  const bumpAt = inst.lastBumpTestAt ? new Date(inst.lastBumpTestAt) : null;
  let bump: BumpStatus;
  if (!bumpAt) bump = 'never';
  else if (siteDay(bumpAt, timeZone) !== day) bump = 'not_today';
  else if (bumpAt.getTime() > at.getTime()) bump = 'after_test';
  else bump = 'today';
  if (requireDailyBumpTest && bump !== 'today') {
    const when = bump === 'after_test' ? ` It was bump-tested at ${siteTimeOfDay(bumpAt!, timeZone)}, after this test.` : '';
    reasons.push(`${name} has no bump test on ${day} before the test; this tenant requires a bump test on the day of use.${when}`);
  }
  return { usable: reasons.length === 0, calibration, calibrationDaysLeft: daysLeft, bump, reasons };
}
