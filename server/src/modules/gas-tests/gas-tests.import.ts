import { randomUUID } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { parseCsv } from '@shared/csv/read-csv';
import { guessMapping, mappingProblems, MAX_IMPORT_ROWS, readRows, type ColumnMapping } from '@shared/gas-tests/csv-readings';
import { instrumentStatus } from '@shared/gas-tests/instrument-status';
import { assessOptionsFor } from '@shared/gas-tests/permit-limits';
import { assessVentOutlet } from '@shared/gas-tests/vent-outlet';
import { siteDay } from '@shared/time/zone';
import { liveStates } from '@shared/permit/states';
import type { GasTestPlace } from '@shared/schemas/gas-tests.schema';
import type { GasImportResult } from '@shared/types/gas-tests';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { appendAudit } from '../audit/audit.service';
import { holdsQualification } from '../../lib/qualifications';
import { notifyChange } from '../isolations/isolation-queries';
import { auditActor, type CallerContext } from '../../lib/caller';
import { limitsForPermit, liveSince, resolveOverdue } from './gas-tests.repository';
import { findInstrument } from './instruments.service';
import { isEnteredLate, observationBounds, observedTimeProblem } from '../permits/observed-time';
import { permitFor, requireWorkOpen } from './permit-access';
import { suspendForFailure } from './gas-tests.service';

export interface ImportRequest {
  csv: string;
  instrumentId: string;
  place: GasTestPlace;
  placeNote?: string;
  mapping?: Partial<ColumnMapping>;
  dryRun: boolean;
}

const PREVIEW_ROWS = 20;

/**
 * A monitor's log as one series of gas tests. The dry run answers the columns, the mapping, a
 * preview and every invalid row; the import writes every row or, if any row is invalid, none.
 */
export async function importGasLog(deps: AppDeps, caller: CallerContext, permitId: string, input: ImportRequest): Promise<GasImportResult> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await permitFor(deps, caller, permitId, { action: 'create', type: 'GasTest', what: 'gas tests' }, { lock: !input.dryRun });
    requireWorkOpen(permit, 'Gas tests');
    const instrument = await findInstrument(deps.sequelize, tenantId, input.instrumentId);
    if (!instrument) throw AppError.validation('Choose an instrument from the register.', [{ path: 'instrumentId', message: 'No such instrument in this tenant.' }]);
    const bounds = await observationBounds(deps, permit);
    const { settings, now } = bounds;

    const csv = parseCsv(input.csv);
    const headers = csv.records[0]?.cells.map((h) => h.trim()) ?? [];
    // Rows the reader could not make sense of still count: each is reported on its row below.
    const dataRows = Math.max(0, csv.records.length - 1) + csv.errors.filter((e) => e.row > 1).length;
    if (!headers.length || dataRows === 0) throw AppError.validation('The file has no readings: it needs a header row and at least one row below it.', [{ path: 'csv', message: 'No rows below the header.' }]);
    if (dataRows > MAX_IMPORT_ROWS) throw AppError.validation(`The file has ${dataRows} rows; import at most ${MAX_IMPORT_ROWS} at a time.`, [{ path: 'csv', message: 'Too many rows.' }]);
    const mapping = { ...guessMapping(headers), ...Object.fromEntries(Object.entries(input.mapping ?? {}).filter(([, v]) => v)) } as Partial<ColumnMapping>;
    const problems = mappingProblems(headers, mapping);
    const base = { dryRun: input.dryRun, headers, mapping, rows: dataRows, permitState: permit.state, suspended: false, imported: 0, seriesId: null };
    if (problems.length) {
      if (input.dryRun) return { ...base, validRows: 0, invalidRows: [], preview: [], failing: 0, mappingProblems: problems };
      throw AppError.validation('Choose which column holds each reading.', problems);
    }

    const { limits } = await limitsForPermit(deps.sequelize, permit);
    const read = readRows(csv, mapping as ColumnMapping, {
      timeZone: settings.timeZone, now, limits, assess: assessOptionsFor(permit.kinds),
      // A vent outlet carries vapour by design: its flammable readings have their own limit, never the hot-work one.
      judge: input.place === 'vent_outlet' ? (r) => assessVentOutlet(r, limits, settings.ventOutletLelPct) : undefined,
      instrumentReasons: (at) => instrumentStatus(instrument, at, settings.timeZone, settings.requireDailyBumpTest).reasons,
    });
    // The tester vouches for every reading: they must have been qualified on each day of the log.
    // Days are site days: a reading at 19:00 in Chicago belongs to that day, not to the next UTC date.
    const dayOf = (at: Date) => siteDay(at, settings.timeZone);
    const firstOfDay = new Map<string, Date>();
    for (const r of read.valid) if (!firstOfDay.has(dayOf(r.testedAt))) firstOfDay.set(dayOf(r.testedAt), r.testedAt);
    const unqualified = new Set<string>();
    for (const [day, at] of firstOfDay) if (!(await holdsQualification(deps.sequelize, tenantId, caller.user.id, 'gas_tester', at))) unqualified.add(day);
    const already = new Set(
      (
        await deps.sequelize.query<{ at: Date }>(
          `SELECT tested_at AS at FROM gas_tests WHERE tenant_id = :tenantId AND permit_id = :permitId AND instrument_id = :instrumentId AND source = 'import'`,
          { replacements: { tenantId, permitId, instrumentId: instrument.id }, type: QueryTypes.SELECT },
        )
      ).map((r) => new Date(r.at).getTime()),
    );
    const valid = [];
    const invalid = [...read.invalid];
    for (const r of read.valid) {
      const reasons = [];
      const timeProblem = observedTimeProblem(bounds, r.testedAt);
      if (timeProblem) reasons.push(timeProblem);
      if (unqualified.has(dayOf(r.testedAt))) reasons.push(`${caller.user.name} held no in-date gas tester qualification on ${dayOf(r.testedAt)}.`);
      if (already.has(r.testedAt.getTime())) reasons.push('This reading was already imported from an earlier file.');
      if (reasons.length) invalid.push({ row: r.row, reasons });
      else valid.push(r);
    }
    invalid.sort((a, b) => a.row - b.row);
    const failing = valid.filter((r) => r.assessment.verdict === 'fail');
    const result = {
      ...base,
      validRows: valid.length,
      invalidRows: invalid,
      failing: failing.length,
      preview: valid.slice(0, PREVIEW_ROWS).map((r) => ({ row: r.row, testedAt: r.testedAt.toISOString(), readings: r.readings, verdict: r.assessment.verdict })),
    };
    if (input.dryRun) return result;
    if (invalid.length)
      throw new AppError('unprocessable', `${invalid.length} row(s) of the file are not valid; nothing was imported. Correct them or remove them and import the file again.`, invalid.slice(0, 50).map((r) => ({ path: `row ${r.row}`, message: r.reasons.join(' ') })), { invalidRows: invalid });

    const seriesId = randomUUID();
    const rows = valid.map((r) => ({
      tested_at: r.testedAt.toISOString(), readings: r.readings, verdict: r.assessment.verdict, assessment: r.assessment, entered_late: isEnteredLate(bounds, r.testedAt),
    }));
    await deps.sequelize.query(
      `INSERT INTO gas_tests (tenant_id, permit_id, tester_user_id, instrument_id, place, place_note, purpose, tested_at, readings, verdict, assessment, source, series_id, entered_late, created_at)
       SELECT :tenantId, :permitId, :tester, :instrumentId, :place, :placeNote, NULL, x.tested_at, x.readings, x.verdict, x.assessment, 'import', :seriesId, x.entered_late, :now
       FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(tested_at timestamptz, readings jsonb, verdict text, assessment jsonb, entered_late boolean)`,
      { replacements: { tenantId, permitId, tester: caller.user.id, instrumentId: instrument.id, place: input.place, placeNote: input.placeNote ?? null, seriesId, now, rows: JSON.stringify(rows) } },
    );
    const times = valid.map((r) => r.testedAt.getTime());
    const lateRows = rows.filter((r) => r.entered_late).length;
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'gas_test_series', entityId: seriesId, permitId, action: 'gas_tests_imported', actor: auditActor(caller, 'create'), ip: caller.ip,
      data: {
        rows: valid.length, failing: failing.length, from: new Date(Math.min(...times)).toISOString(), to: new Date(Math.max(...times)).toISOString(), instrument: `${instrument.model} ${instrument.serial}`, place: input.place,
        ...(lateRows ? { enteredLate: lateRows } : {}),
      },
      occurredAt: now,
    });
    if (valid.some((r) => r.assessment.verdict === 'pass')) await resolveOverdue(deps.sequelize, tenantId, permitId, 'gas_test', now);

    // Only readings taken during the present spell of live work stop it; an old log is history.
    let state = permit.state;
    const since = liveStates.includes(permit.state) ? await liveSince(deps.sequelize, tenantId, permitId) : null;
    const firstLiveFail = since ? failing.filter((r) => r.testedAt.getTime() >= since.getTime()).sort((a, b) => a.testedAt.getTime() - b.testedAt.getTime())[0] : undefined;
    if (firstLiveFail) {
      state = (await suspendForFailure(deps, permit, firstLiveFail.assessment, { place: input.place, testedAt: firstLiveFail.testedAt, tester: caller.user.name, timeZone: settings.timeZone })).state;
    } else await notifyChange(deps.sequelize, { tenantId, kind: 'gas_test', id: permitId, imported: valid.length });
    return { ...result, imported: valid.length, seriesId, permitState: state, suspended: state !== permit.state };
  });
}
