import type { AtmosphereAssessment, AtmosphereLimits } from '../calc/atmosphere';
import type { readingColumns } from '../gas-tests/csv-readings';
import type { PermitState } from '../permit/states';
import type { Page } from '../schemas/common.schema';
import type { GasTestPlace, GasTestPurpose, PermitGasLimitsInput } from '../schemas/gas-tests.schema';
import type { Moment } from './moment';

// What the gas-test API answers (`Time`: see ./moment.ts).

/** One monitor of GET /api/instruments, and the answer of POST and PATCH. */
export interface InstrumentRow<Time extends Moment = string> {
  id: string;
  tenantId: string;
  model: string;
  serial: string;
  lastBumpTestAt: Time | null;
  /** "YYYY-MM-DD". */
  lastCalibratedOn: string | null;
  /** "YYYY-MM-DD": the last day the calibration holds. */
  calibrationDueOn: string;
  retiredAt: Time | null;
}

/** GET /api/instruments: the tenant rule travels with the list, so the screen judges "usable" as the server will. */
export type InstrumentList<Time extends Moment = string> = Page<InstrumentRow<Time>> & { requireDailyBumpTest: boolean };

export interface GasReadings {
  o2Pct: number;
  lelPct: number;
  h2sPpm: number;
  coPpm: number;
  others?: { name: string; value: number; unit: string }[];
}

/** One row of GET /api/permits/:id/gas-tests. */
export interface GasTestRow<Time extends Moment = string> {
  id: string;
  permitId: string;
  testedAt: Time;
  place: GasTestPlace;
  placeNote: string | null;
  purpose: GasTestPurpose | null;
  readings: GasReadings;
  verdict: 'pass' | 'fail';
  assessment: AtmosphereAssessment;
  testerName: string;
  instrument: { id: string; model: string; serial: string } | null;
  source: 'manual' | 'import';
  seriesId: string | null;
  notes: string | null;
  /** Written down more than a few minutes after the test was taken. */
  enteredLate: boolean;
}

/** POST /api/permits/:id/gas-tests: the test, its verdict and what it did to the permit. */
export interface GasTestResult<Time extends Moment = string> {
  test: GasTestRow<Time>;
  verdict: 'pass' | 'fail';
  assessment: AtmosphereAssessment;
  permitState: PermitState;
  suspended: boolean;
}

/** POST /api/permits/:id/gas-tests/import, dry run or not. */
export interface GasImportResult {
  dryRun: boolean;
  headers: string[];
  mapping: Partial<Record<(typeof readingColumns)[number], string>>;
  rows: number;
  validRows: number;
  invalidRows: { row: number; reasons: string[] }[];
  preview: { row: number; testedAt: string; readings: GasReadings; verdict: 'pass' | 'fail' }[];
  failing: number;
  imported: number;
  seriesId: string | null;
  permitState: PermitState;
  suspended: boolean;
  /** Dry run only: columns still to choose before the rows can be read. */
  mappingProblems?: { path: string; message: string }[];
}

/** PUT /api/permits/:id/gas-limits: the limits the permit's tests are judged against. */
export interface PermitLimitsView {
  limits: AtmosphereLimits;
  hotWork: boolean;
  permitRequest: PermitGasLimitsInput | null;
}
