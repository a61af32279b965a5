import { QueryTypes } from 'sequelize';
import type { AtmosphereAssessment } from '@shared/calc';
import type { GaugeUnit } from '@shared/calc/pressure';
import type { StepCondition, StepKind, verificationLabels } from '@shared/schemas/isolation.schema';
import type { GasTestPlace, GasTestPurpose } from '@shared/schemas/gas-tests.schema';
import type { CheckKind } from '@shared/schemas/timed-checks.schema';
import type { AppDeps } from '../../deps';
import { loadTenantSettings } from '../tenants/tenant-settings';

// What the printed permit reads beyond the permit page's answer: every step, hold test, gas test, check and handover.

export interface StepRow {
  seq: number; kind: StepKind; condition: StepCondition; status: string; label: string; position: number | null;
  lock_number: string | null; tag_number: string | null;
  applied_by: string | null; applied_at: Date | null; verified_by: string | null; verified_at: Date | null;
  verification_method: keyof typeof verificationLabels | null; verification_reading: number | null; verification_unit: string | null;
  removed_by: string | null; removed_at: Date | null; removal_note: string | null;
  plug_diameter_in: number | null; plug_as_built: { bentoniteLb?: number; waterLb?: number; lengthIn?: number; builtAt?: string } | null;
  plug_warnings: { code: string; message: string }[] | null; plug_warnings_ack_by: string | null; line_stop_as_built: Record<string, unknown> | null;
}
export interface ProvingRow {
  label: string; unit: GaugeUnit; max_pressure: number; max_pressure_unit: GaugeUnit; hold_minutes: number; start_reading: number; started_at: Date; started_by: string;
  end_reading: number | null; ended_at: Date | null; ended_by: string | null; result: 'running' | 'proved' | 'failed'; failure: string | null; notes: string | null;
}
export interface GasRow {
  tested_at: Date; place: GasTestPlace; place_note: string | null; purpose: GasTestPurpose | null; verdict: 'pass' | 'fail'; tester: string;
  readings: Record<string, number | null>; assessment: Partial<AtmosphereAssessment> | null; notes: string | null; entered_late: boolean;
}
export interface CheckRow { kind: CheckKind; label: string | null; checked_at: Date; ok: boolean; observation: Record<string, unknown>; action_taken: string | null; notes: string | null; recorded_by: string }
export interface HandoverRow { status: string; from_name: string; to_name: string; open_points: string; from_signed_name: string; from_signed_at: Date; to_signed_name: string | null; accepted_at: Date | null }

/** Everything the printed permit shows beyond the permit page's own answer, read in the caller's tenant. */
export async function loadPrintRecord(deps: AppDeps, tenantId: string, permitId: string) {
  const { sequelize } = deps;
  const r = { replacements: { tenantId, id: permitId }, type: QueryTypes.SELECT } as const;
  const settings = await loadTenantSettings(sequelize, tenantId);
  const steps = await sequelize.query<StepRow>(
    `SELECT s.seq, s.kind, s.condition, s.status, coalesce(ip.tag_code, s.temp_label) AS label, coalesce(ip.position, s.temp_position)::float8 AS position,
            l.number AS lock_number, t.number AS tag_number, ua.name AS applied_by, s.applied_at, uv.name AS verified_by, s.verified_at,
            s.verification_method, s.verification_reading::float8 AS verification_reading, s.verification_unit,
            ur.name AS removed_by, s.removed_at, s.removal_note, s.plug_diameter_in::float8 AS plug_diameter_in, s.plug_as_built, s.plug_warnings,
            uw.name AS plug_warnings_ack_by, s.line_stop_as_built
     FROM isolation_steps s
     LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
     LEFT JOIN locks l ON l.tenant_id = s.tenant_id AND l.id = s.lock_id
     LEFT JOIN tags t ON t.tenant_id = s.tenant_id AND t.id = s.tag_id
     LEFT JOIN users ua ON ua.id = s.applied_by LEFT JOIN users uv ON uv.id = s.verified_by
     LEFT JOIN users ur ON ur.id = s.removed_by LEFT JOIN users uw ON uw.id = s.plug_warnings_ack_by
     WHERE s.tenant_id = :tenantId AND s.permit_id = :id ORDER BY s.seq`,
    r,
  );
  const provings = await sequelize.query<ProvingRow>(
    `SELECT coalesce(ip.tag_code, s.temp_label) AS label, x.unit, x.max_pressure::float8 AS max_pressure, x.max_pressure_unit, x.hold_minutes,
            x.start_reading::float8 AS start_reading, x.started_at, us.name AS started_by, x.end_reading::float8 AS end_reading, x.ended_at, ue.name AS ended_by,
            x.result, x.failure, x.notes
     FROM isolation_provings x JOIN isolation_steps s ON s.tenant_id = x.tenant_id AND s.id = x.step_id
     LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
     JOIN users us ON us.id = x.started_by LEFT JOIN users ue ON ue.id = x.ended_by
     WHERE x.tenant_id = :tenantId AND x.permit_id = :id ORDER BY x.started_at`,
    r,
  );
  const gas = await sequelize.query<GasRow>(
    `SELECT g.tested_at, g.place, g.place_note, g.purpose, g.verdict, u.name AS tester, g.readings, g.assessment, g.notes, g.entered_late
     FROM gas_tests g JOIN users u ON u.id = g.tester_user_id WHERE g.tenant_id = :tenantId AND g.permit_id = :id ORDER BY g.tested_at, g.created_at`,
    r,
  );
  const checks = await sequelize.query<CheckRow>(
    `SELECT c.kind, coalesce(ip.tag_code, s.temp_label) AS label, c.checked_at, c.ok, c.observation, c.action_taken, c.notes, u.name AS recorded_by
     FROM permit_checks c JOIN users u ON u.id = c.recorded_by
     LEFT JOIN isolation_steps s ON s.tenant_id = c.tenant_id AND s.id = c.isolation_step_id
     LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
     WHERE c.tenant_id = :tenantId AND c.permit_id = :id ORDER BY c.checked_at`,
    r,
  );
  const handovers = await sequelize.query<HandoverRow>(
    `SELECT h.status, uf.name AS from_name, ut.name AS to_name, h.open_points, h.from_signed_name, h.from_signed_at, h.to_signed_name, h.accepted_at
     FROM permit_handovers h JOIN users uf ON uf.id = h.from_user_id JOIN users ut ON ut.id = h.to_user_id
     WHERE h.tenant_id = :tenantId AND h.permit_id = :id ORDER BY h.from_signed_at`,
    r,
  );
  // Where the permit stands in the tenant's hash chain: a printed copy can be checked against the live trail.
  const [chain] = await sequelize.query<{ seq: string; hash: string }>(
    `SELECT a.seq::text AS seq, a.hash FROM audit_events a WHERE a.tenant_id = :tenantId AND a.permit_id = :id ORDER BY a.seq DESC LIMIT 1`,
    r,
  );
  return { settings, steps, provings, gas, checks, handovers, chain: chain ?? null };
}

export type PrintRecord = Awaited<ReturnType<typeof loadPrintRecord>>;
