// The large-operator dataset, added to the Bramblecote demo tenant of a database that already holds
// the demo (`demo/cli.ts setup`), so the demo people sign in straight into it. Run through
// `npm run seed:scale` (scripts/seed-scale.mjs → scripts/scale/seed-data.ts).
// Everything is invented. Historic permits are written as an import would write them: each event
// keeps the time it happened and is appended to the tenant's audit chain, in time order, after the
// events already there (hashed exactly as appendAudit hashes them).
import pg from 'pg';
import { assessAtmosphere, type AtmosphereAssessment, type AtmosphereReadings } from '@shared/calc';
import { assessOptionsFor } from '@shared/gas-tests/permit-limits';
import { resolveInsideDiameter } from '@shared/assets/inside-diameter';
import { readTenantSettings } from '@shared/schemas/tenant-settings.schema';
import type { ChecklistItem } from '@shared/types/permits';
import type { WorkKind } from '@shared/permit/states';
import { limitsFromSettings } from '../../server/src/lib/atmosphere-limits';
import { AuditChainWriter, BulkInsert, Progress, backendCpuSeconds, deferForeignKeys, deferIndexes, randomSource, type AuditEventFields } from './bulk';
import { SCALE_CODE_PREFIX, SCALE_INSTRUMENT_SERIAL, SCALE_TENANT_SLUG } from './dataset';

/** The full dataset; `factor` scales every count (tests build a sliver of it). */
export function scaleCounts(factor = 1) {
  const scaled = (n: number) => Math.max(1, Math.round(n * factor));
  return {
    pipelines: scaled(200),
    pointsPerPipeline: 100,
    historicPermits: scaled(60_000),
    livePermits: scaled(2_000),
    stepsPerLivePermit: 4,
    gasReadings: scaled(500_000),
    locks: scaled(10_000),
  };
}

export interface ScaleResult {
  /** False when the database already held the dataset (nothing was written). */
  built: boolean;
  tenantId: string;
  counts: Record<string, number>;
  seconds: number;
  /** CPU seconds PostgreSQL spent for the load (its two writing sessions), when /proc can be read. */
  databaseCpuSeconds?: number | null;
}

const HOUR = 3_600_000;
const DAY = 24 * HOUR;
const iso = (t: number) => new Date(t).toISOString();

const firstParts = ['Brack', 'Cold', 'Fern', 'Hazel', 'Kest', 'Lark', 'Mossen', 'Quill', 'Rushen', 'Sedge', 'Thorn', 'Wend', 'Yarrow', 'Ambel', 'Corvin', 'Dray'];
const lastParts = ['mere', 'holt', 'wick', 'stead', 'brook', 'hythe', 'combe', 'ley', 'garth', 'well'];
const lineKinds = ['Lateral', 'Trunk', 'Loop', 'Spur', 'Gathering Line', 'Crossover'];
const products = ['refined_products', 'crude_oil', 'natural_gas', 'ngl'] as const;
const sizes: { nps: number; schedule: 'STD' | '40' | 'XS'; mop: number }[] = [
  { nps: 8, schedule: '40', mop: 1200 }, { nps: 10, schedule: '40', mop: 1100 }, { nps: 12, schedule: 'STD', mop: 1050 },
  { nps: 16, schedule: 'STD', mop: 1440 }, { nps: 20, schedule: 'XS', mop: 1000 }, { nps: 24, schedule: 'STD', mop: 900 },
];
const jobs = ['Replace a coated sleeve', 'Cut out and replace a dented joint', 'Fit a type B repair sleeve', 'Recoat a girth weld', 'Replace a leaking drain valve',
  'Install a new launcher tee', 'Lower the line under a new road crossing', 'Replace a corroded spool', 'Hot-tap a new lateral connection', 'Repair a casing short'];
const kindSets: WorkKind[][] = [['cold_work'], ['hot_work'], ['hot_work', 'excavation'], ['cold_work', 'excavation'], ['hot_work', 'confined_space']];

interface Person {
  id: string;
  name: string;
}

/** Writes the dataset into `url` (which must hold the demo); `progress` draws a bar on stderr. */
export async function buildScaleDataset(url: string, options: { factor?: number; progress?: boolean } = {}): Promise<ScaleResult> {
  const SCALE = scaleCounts(options.factor ?? 1);
  const rnd = randomSource(20261202);
  const now = new Date();
  const stationsPerPipeline = SCALE.pointsPerPipeline / 5;
  const place = () => `${rnd.pick(firstParts)}${rnd.pick(lastParts)}`;
  const started = Date.now();
  const a = new pg.Client({ connectionString: url });
  const b = new pg.Client({ connectionString: url });
  await Promise.all([a.connect(), b.connect()]);
  // A bulk load that can simply be run again needs no flush to disk per statement.
  await Promise.all([a.query('SET synchronous_commit = off'), b.query('SET synchronous_commit = off')]);
  const one = async <R>(sql: string, params: unknown[] = []) => (await a.query(sql, params)).rows[0] as R;

  const tenant = await one<{ id: string; settings: unknown } | undefined>(`SELECT id, settings FROM tenants WHERE slug = $1`, [SCALE_TENANT_SLUG]);
  if (!tenant) throw new Error('The demo tenant is missing: run `demo/cli.ts setup` on this database first.');
  const tenantId = tenant.id;
  await Promise.all([a.query(`SELECT set_config('app.tenant_id', $1, false)`, [tenantId]), b.query(`SELECT set_config('app.tenant_id', $1, false)`, [tenantId])]);
  const already = await one<{ n: number }>(`SELECT count(*)::int AS n FROM pipelines WHERE tenant_id = $1 AND code LIKE $2`, [tenantId, `${SCALE_CODE_PREFIX}%`]);
  if (already.n > 0) {
    await Promise.all([a.end(), b.end()]);
    return { built: false, tenantId, counts: {}, seconds: 0 };
  }

  const people = (await a.query<Person & { email: string }>(`SELECT id, name, email FROM users`)).rows;
  const who = (email: string): Person => {
    const p = people.find((x) => x.email === email);
    if (!p) throw new Error(`demo user ${email} is missing`);
    return p;
  };
  const lead = who('lead@oxbow-repair.example');
  const authorisers = [who('authoriser@bramblecote.example'), who('authoriser2@bramblecote.example')];
  const tech = who('tech@oxbow-repair.example');
  const tech2 = who('tech2@oxbow-repair.example');
  const control = who('control@bramblecote.example');
  const contractor = await one<{ id: string }>(`SELECT id FROM organisations WHERE tenant_id = $1 AND kind = 'contractor' ORDER BY name LIMIT 1`, [tenantId]);
  const template = (await a.query<{ key: string; label: string; required_for: string[]; stage: string }>(
    `SELECT key, label, required_for, stage FROM checklist_templates WHERE tenant_id = $1 ORDER BY stage, sort, key`, [tenantId])).rows;
  const settings = readTenantSettings(tenant.settings);
  const { limits } = limitsFromSettings(tenant.settings);
  const headRow = await one<{ seq: number; last_hash: string } | undefined>(`SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = $1`, [tenantId]);
  const sequences = new Map((await a.query<{ year: number; last: number }>(`SELECT year, last FROM permit_sequences WHERE tenant_id = $1`, [tenantId])).rows.map((r) => [r.year, r.last]));
  const nextNumber = (at: number) => {
    const year = new Date(at).getUTCFullYear();
    const n = (sequences.get(year) ?? 0) + 1;
    sequences.set(year, n);
    return `PW-${year}-${String(n).padStart(4, '0')}`;
  };

  // Rough row count for the progress bar: assets, permits, steps, gas readings and about 25 events per permit.
  const expected = SCALE.pipelines * (SCALE.pointsPerPipeline + 3) + 2 * SCALE.locks + SCALE.historicPermits * 28 + SCALE.livePermits * 30 + SCALE.gasReadings * 2;
  const progress = new Progress(expected, options.progress ?? false);
  const tick = (n: number) => progress.tick(n);
  const table = (client: pg.Client, name: string, cols: ConstructorParameters<typeof BulkInsert>[2]) => new BulkInsert(client, name, cols, 1_000, tick);

  // ---- Assets ----------------------------------------------------------------------------------
  progress.setPhase('pipelines and points');
  const pipelines = table(b, 'pipelines', [
    ['id', 'uuid[]'], ['tenant_id', 'uuid[]'], ['code', 'text[]'], ['name', 'text[]'], ['product', 'text[]'], ['nps', 'numeric[]'], ['schedule', 'text[]'],
    ['inside_diameter_in', 'numeric[]'], ['inside_diameter_source', 'text[]'], ['mop_psig', 'numeric[]'], ['start_position', 'numeric[]'], ['end_position', 'numeric[]'], ['notes', 'text[]'],
  ]);
  const sites = table(b, 'pipeline_sites', [['tenant_id', 'uuid[]'], ['pipeline_id', 'uuid[]'], ['name', 'text[]'], ['position', 'numeric[]']]);
  const points = table(b, 'isolation_points', [
    ['id', 'uuid[]'], ['tenant_id', 'uuid[]'], ['pipeline_id', 'uuid[]'], ['tag_code', 'text[]'], ['kind', 'text[]'], ['position', 'numeric[]'], ['description', 'text[]'],
    ['valve_type', 'text[]'], ['normal_position', 'text[]'], ['remotely_operable', 'boolean[]'],
  ]);
  sites.after(pipelines);
  points.after(pipelines);
  interface Point { id: string; tag: string; kind: string; position: number; remote: boolean }
  interface Line { id: string; name: string; length: number; points: Point[] }
  const lines: Line[] = [];
  for (let p = 0; p < SCALE.pipelines; p++) {
    const code = `${SCALE_CODE_PREFIX}${String(p + 1).padStart(3, '0')}`;
    const from = place();
    const to = place();
    const size = rnd.pick(sizes);
    const length = rnd.int(40, 120);
    const line: Line = { id: rnd.uuid(), name: `${code} ${from} ${rnd.pick(lineKinds)}`, length, points: [] };
    const id = resolveInsideDiameter({ nps: size.nps, schedule: size.schedule });
    pipelines.add([line.id, tenantId, code, line.name, rnd.pick(products), size.nps, size.schedule, id.idIn.toFixed(3), id.source, size.mop, 0, length, `From ${from} Station to ${to} Terminal.`]);
    sites.add([tenantId, line.id, `${from} Station`, 0]);
    sites.add([tenantId, line.id, `${place()} Pump Station`, Math.round(length / 2)]);
    sites.add([tenantId, line.id, `${to} Terminal`, length]);
    const tagBase = code.replace('-', '');
    for (let s = 0; s < stationsPerPipeline; s++) {
      // A valve station every length/20: two block valves bracketing a vent and a drain, and the pump motor's isolator.
      const at = (length * s) / stationsPerPipeline;
      const road = `${place()} Road`;
      const layout: [kind: string, abbr: string, offset: number, description: string][] = [
        ['block_valve', 'BV', 0, `Mainline valve at ${road}, upstream`],
        ['vent', 'VT', 0.1, `Vent between the valves at ${road}`],
        ['drain', 'DR', 0.5, `Drain between the valves at ${road}`],
        ['block_valve', 'BV', 0.6, `Mainline valve at ${road}, downstream`],
        ['isolator', 'EI', 1, `Booster pump motor starter, valve station at ${road}`],
      ];
      for (const [k, [kind, abbr, offset, description]] of layout.entries()) {
        const valve = kind === 'block_valve';
        const pt: Point = { id: rnd.uuid(), tag: `${tagBase}-${abbr}-${String(s * 5 + k).padStart(3, '0')}`, kind, position: Math.round((at + offset) * 1000) / 1000, remote: valve && rnd.chance(0.3) };
        line.points.push(pt);
        points.add([pt.id, tenantId, line.id, pt.tag, kind, pt.position, description, valve ? rnd.pick(['gate', 'ball', 'plug']) : null, valve ? 'open' : null, valve ? pt.remote : null]);
      }
    }
    lines.push(line);
  }
  const locks = table(b, 'locks', [['id', 'uuid[]'], ['tenant_id', 'uuid[]'], ['number', 'text[]'], ['state', 'text[]'], ['holder_user_id', 'uuid[]']]);
  const tags = table(b, 'tags', [['id', 'uuid[]'], ['tenant_id', 'uuid[]'], ['number', 'text[]'], ['state', 'text[]'], ['holder_user_id', 'uuid[]']]);
  const liveSteps = SCALE.livePermits * SCALE.stepsPerLivePermit;
  const lockIds: string[] = [];
  const tagIds: string[] = [];
  const lockCount = Math.max(SCALE.locks, liveSteps + 500);
  for (let n = 1; n <= lockCount; n++) {
    const applied = n <= liveSteps;
    const lockId = rnd.uuid();
    const tagId = rnd.uuid();
    lockIds.push(lockId);
    tagIds.push(tagId);
    locks.add([lockId, tenantId, `SL-${String(n).padStart(5, '0')}`, applied ? 'applied' : 'in_store', applied ? tech.id : null]);
    tags.add([tagId, tenantId, `ST-${String(n).padStart(5, '0')}`, applied ? 'applied' : 'in_store', applied ? tech.id : null]);
  }
  await Promise.all([pipelines.done(), sites.done(), points.done(), locks.done(), tags.done()]);
  const instrumentId = rnd.uuid();
  await b.query(
    `INSERT INTO instruments (id, tenant_id, model, serial, last_bump_test_at, last_calibrated_on, calibration_due_on)
     VALUES ($1, $2, 'Fenmark G4 four-gas monitor', $3, now(), CAST(now() AS date) - 30, CAST(now() AS date) + 150)`,
    [instrumentId, tenantId, SCALE_INSTRUMENT_SERIAL],
  );

  const bigTables = ['permits', 'isolation_steps', 'gas_tests', 'audit_events'];
  const rebuildIndexes = await deferIndexes(a, bigTables);
  const restoreForeignKeys = await deferForeignKeys(a, bigTables);

  // ---- Shared builders ---------------------------------------------------------------------------
  const permits = table(b, 'permits', [
    ['id', 'uuid[]'], ['tenant_id', 'uuid[]'], ['number', 'text[]'], ['state', 'text[]'], ['version', 'int[]'], ['kinds', 'text[]', 'text[]'], ['title', 'text[]'], ['scope', 'text[]'],
    ['pipeline_id', 'uuid[]'], ['from_position', 'numeric[]'], ['to_position', 'numeric[]'], ['method_statement', 'text[]'], ['hazards', 'text[]'], ['ppe', 'text[]', 'text[]'],
    ['checklist', 'text[]', 'jsonb'], ['walkdown', 'text[]', 'jsonb'], ['valid_from', 'timestamptz[]'], ['valid_to', 'timestamptz[]'], ['contractor_organisation_id', 'uuid[]'],
    ['contractor_lead_user_id', 'uuid[]'], ['requester_user_id', 'uuid[]'], ['authoriser_user_id', 'uuid[]'], ['holder_user_id', 'uuid[]'], ['fire_watch_minutes', 'int[]'],
    ['gas_test_window_minutes', 'int[]'], ['gas_test_interval_minutes', 'int[]'], ['hot_work_ended_at', 'timestamptz[]'], ['control_room_ack_at', 'timestamptz[]'],
    ['control_room_ack_by', 'uuid[]'], ['rejection_reason', 'text[]'], ['created_at', 'timestamptz[]'], ['updated_at', 'timestamptz[]'],
    // A suspended permit records who stopped the work (migration 0140): here the failing gas test, so Holdpoint.
    ['suspended_by_kind', 'text[]'], ['suspended_at', 'timestamptz[]'], ['suspension_reason', 'text[]'],
  ]);
  const steps = table(b, 'isolation_steps', [
    ['id', 'uuid[]'], ['tenant_id', 'uuid[]'], ['permit_id', 'uuid[]'], ['seq', 'int[]'], ['point_id', 'uuid[]'], ['kind', 'text[]'], ['condition', 'text[]'], ['status', 'text[]'],
    ['remotely_operable', 'boolean[]'], ['lock_id', 'uuid[]'], ['tag_id', 'uuid[]'], ['applied_by', 'uuid[]'], ['applied_at', 'timestamptz[]'], ['remote_ack_by', 'uuid[]'],
    ['remote_ack_at', 'timestamptz[]'], ['verified_by', 'uuid[]'], ['verified_at', 'timestamptz[]'], ['verification_method', 'text[]'], ['removed_by', 'uuid[]'],
    ['removed_at', 'timestamptz[]'], ['control_room_ack_applied_by', 'uuid[]'], ['control_room_ack_applied_at', 'timestamptz[]'], ['control_room_ack_removed_by', 'uuid[]'],
    ['control_room_ack_removed_at', 'timestamptz[]'], ['created_at', 'timestamptz[]'], ['updated_at', 'timestamptz[]'], ['applied_seq', 'int[]'],
  ]);
  const gas = table(b, 'gas_tests', [
    ['id', 'uuid[]'], ['tenant_id', 'uuid[]'], ['permit_id', 'uuid[]'], ['tester_user_id', 'uuid[]'], ['instrument_id', 'uuid[]'], ['place', 'text[]'], ['purpose', 'text[]'],
    ['tested_at', 'timestamptz[]'], ['readings', 'text[]', 'jsonb'], ['verdict', 'text[]'], ['assessment', 'text[]', 'jsonb'], ['source', 'text[]'], ['created_at', 'timestamptz[]'],
    ['series_id', 'uuid[]'],
  ]);
  steps.after(permits);
  gas.after(permits);
  const chain = new AuditChainWriter(a, tenantId, { seq: Number(headRow?.seq ?? 0), hash: headRow?.last_hash ?? '' }, tick);

  // Readings from a small pool, judged once each by the same assessment the API uses.
  const passing: AtmosphereReadings[] = [];
  for (let i = 0; i < 24; i++) passing.push({ o2Pct: 20.9 - (i % 4) / 10, lelPct: i % 3 === 0 ? 0 : (i % 5) / 2, h2sPpm: i % 4, coPpm: i % 6 });
  const failing: AtmosphereReadings = { o2Pct: 20.6, lelPct: 14, h2sPpm: 2, coPpm: 8 };
  const judged = new Map<string, { readings: string; verdict: 'pass' | 'fail'; assessment: string; gases: AtmosphereReadings }>();
  const judge = (r: AtmosphereReadings, kinds: WorkKind[]) => {
    const key = `${JSON.stringify(r)}|${kinds.includes('hot_work')}`;
    let j = judged.get(key);
    if (!j) {
      const assessment: AtmosphereAssessment = assessAtmosphere(r, limits, assessOptionsFor(kinds));
      j = { readings: JSON.stringify(r), verdict: assessment.verdict, assessment: JSON.stringify(assessment), gases: r };
      judged.set(key, j);
    }
    return j;
  };

  type Event = Omit<AuditEventFields, 'seq' | 'tenant_id'>;
  const permitEvent = (permitId: string, action: string, at: number, actor: (Person & { role: string }) | null, extra: Partial<Event> = {}): Event => ({
    entity_type: 'permit', entity_id: permitId, permit_id: permitId, action, from_state: null, to_state: null, actor_user_id: actor?.id ?? null, actor_name: actor?.name ?? null,
    actor_role: actor?.role ?? null, membership_id: null, reason: null, ip: null, data: {}, occurred_at: new Date(at), ...extra,
  });
  const as = (p: Person, role: string) => ({ ...p, role });
  const signed = (p: Person) => ({ signedName: p.name, passwordConfirmed: true });
  const checklistFor = (kinds: WorkKind[], stage: string, by: Person | null, at: number): ChecklistItem[] =>
    template
      .filter((t) => t.stage === stage)
      .map((t) => ({
        key: t.key, label: t.label, required: t.required_for.includes('all') || t.required_for.some((k) => (kinds as string[]).includes(k)),
        confirmed: Boolean(by), confirmedBy: by?.id ?? null, confirmedByName: by?.name ?? null, confirmedAt: by ? iso(at) : null,
      }));

  /** Writes one permit with its steps, gas readings and events; returns the events for the chain (time-sorted by the caller). */
  const writePermit = (o: {
    state: string; kinds: WorkKind[]; line: Line; stationPoints: Point[]; validFrom: number; validTo: number; created: number; stepStatus: 'removed' | 'verified' | 'applied';
    lockAt: (k: number) => number; gasCount: number; lastGasFails: boolean; accepted: number | null; workStarted: number | null; handBack: number | null; closed: number | null;
    suspended: boolean; cancelledAt: number | null; ackShare: number;
  }) => {
    const id = rnd.uuid();
    // The permit row goes in before its steps and readings (they point at it), so those wait here.
    const stepRows: unknown[][] = [];
    const gasRows: unknown[][] = [];
    const number = nextNumber(o.validFrom);
    const authoriser = rnd.pick(authorisers);
    const events: Event[] = [];
    const from = o.stationPoints[1].position + 0.1;
    const to = o.stationPoints[2].position - 0.1;
    const title = `${rnd.pick(jobs)} at MP ${((from + to) / 2).toFixed(1)}`;
    const requested = o.created + rnd.int(10, 90) * 60_000;
    const approved = requested + rnd.int(20, 240) * 60_000;
    events.push(permitEvent(id, 'created', o.created, as(lead, 'contractor_lead'), { to_state: 'draft', data: { number, title } }));
    events.push(permitEvent(id, 'submit', requested, as(lead, 'contractor_lead'), { from_state: 'draft', to_state: 'requested' }));
    if (o.cancelledAt !== null) {
      events.push(permitEvent(id, 'cancel', o.cancelledAt, as(authoriser, 'authoriser'), { from_state: 'requested', to_state: 'cancelled', reason: 'Work moved to a later outage.' }));
    } else {
      events.push(permitEvent(id, 'approve', approved, as(authoriser, 'authoriser'), { from_state: 'requested', to_state: 'approved', data: signed(authoriser) }));
    }
    if (o.accepted !== null) events.push(permitEvent(id, 'accept', o.accepted, as(lead, 'contractor_lead'), { from_state: 'approved', to_state: 'accepted', data: signed(lead) }));
    // Finished permits are kept to the two block valves; live ones isolate valves, vent and drain.
    const stepPoints = o.stepStatus === 'removed' ? [o.stationPoints[0], o.stationPoints[3]] : o.stationPoints.slice(0, SCALE.stepsPerLivePermit);
    if (o.accepted !== null) {
      for (const [k, pt] of stepPoints.entries()) {
        const stepId = rnd.uuid();
        const lockIdx = o.lockAt(k);
        const appliedAt = o.accepted + (k + 1) * 12 * 60_000;
        const verifiedAt = o.stepStatus === 'applied' ? null : appliedAt + 20 * 60_000;
        const removedAt = o.stepStatus === 'removed' ? o.handBack! + (k + 1) * 10 * 60_000 : null;
        const acked = rnd.chance(o.ackShare);
        const condition = pt.kind === 'block_valve' ? 'closed_locked_tagged' : pt.kind === 'vent' ? 'vent_open' : pt.kind === 'drain' ? 'drained' : 'energy_isolated';
        const kind = pt.kind;
        stepRows.push([
          stepId, tenantId, id, k + 1, pt.id, kind, condition, o.stepStatus, pt.remote, lockIds[lockIdx], tagIds[lockIdx], tech.id, iso(appliedAt),
          pt.remote ? control.id : null, pt.remote ? iso(appliedAt + 5 * 60_000) : null, verifiedAt ? tech2.id : null, verifiedAt ? iso(verifiedAt) : null,
          verifiedAt ? 'visual and try-to-operate' : null, removedAt ? tech.id : null, removedAt ? iso(removedAt) : null,
          acked ? control.id : null, acked ? iso(appliedAt + 8 * 60_000) : null, removedAt ? control.id : null, removedAt ? iso(removedAt + 5 * 60_000) : null,
          iso(o.created), iso(removedAt ?? verifiedAt ?? appliedAt), k + 1,
        ]);
        const stepData = { label: pt.tag, position: pt.position, kind };
        const stepEvent = (action: string, at: number, actor: Person & { role: string }, data: Record<string, unknown>): Event =>
          ({ ...permitEvent(id, action, at, actor, { data: { ...stepData, ...data } }), entity_type: 'isolation_step', entity_id: stepId });
        events.push(stepEvent('isolation_applied', appliedAt, as(tech, 'isolation_technician'), { lock: `SL-${String(lockIdx + 1).padStart(5, '0')}`, tag: `ST-${String(lockIdx + 1).padStart(5, '0')}`, asBuilt: null, warnings: [] }));
        if (pt.remote) events.push(stepEvent('acknowledged_remote_inhibited', appliedAt + 5 * 60_000, as(control, 'control_room'), {}));
        if (acked) events.push(stepEvent('acknowledged_applied', appliedAt + 8 * 60_000, as(control, 'control_room'), {}));
        if (verifiedAt) events.push(stepEvent('isolation_verified', verifiedAt, as(tech2, 'isolation_technician'), { method: 'visual and try-to-operate', reading: null, unit: null }));
        if (removedAt) events.push(stepEvent('isolation_removed', removedAt, as(tech, 'isolation_technician'), { plugOutcome: null, outOfOrderReason: null }));
      }
      if (o.stepStatus !== 'applied') {
        const isolatedAt = o.accepted + (stepPoints.length + 2) * 12 * 60_000;
        events.push(permitEvent(id, 'confirm_isolated', isolatedAt, null, { from_state: 'accepted', to_state: 'isolated', reason: 'Every isolation step is applied and verified by a second person.', data: { by: 'holdpoint' } }));
      }
    }
    // Gas readings: a test before work, then one every interval while the work runs; a failing one
    // suspends the work. On finished permits the repeat readings came from the monitor's log,
    // imported after hand-back as one series (one audit event, as the import feature writes it).
    let suspendedAt: number | null = null;
    const firstTest = (o.workStarted ?? now.getTime()) - 15 * 60_000;
    const series = o.handBack !== null && o.gasCount > 1 ? { id: rnd.uuid(), at: o.handBack + 5 * 60_000, from: 0, to: 0 } : null;
    const instrumentName = `Fenmark G4 four-gas monitor ${SCALE_INSTRUMENT_SERIAL}`;
    for (let g = 0; g < o.gasCount; g++) {
      const at = firstTest + g * settings.gasTestIntervalMinutes * 60_000 + rnd.int(0, 120) * 1000;
      const fails = o.lastGasFails && g === o.gasCount - 1;
      const j = judge(fails ? failing : rnd.pick(passing), o.kinds);
      const testId = rnd.uuid();
      if (series && g > 0) {
        gasRows.push([testId, tenantId, id, tech.id, instrumentId, 'work_area', null, iso(at), j.readings, j.verdict, j.assessment, 'import', iso(series.at), series.id]);
        series.from ||= at;
        series.to = at;
        continue;
      }
      const purpose = g === 0 ? 'before_work' : 'repeat';
      gasRows.push([testId, tenantId, id, tech.id, instrumentId, 'work_area', purpose, iso(at), j.readings, j.verdict, j.assessment, 'manual', iso(at + 60_000), null]);
      events.push({
        ...permitEvent(id, 'gas_test_recorded', at + 60_000, as(tech, 'gas_tester'), {
          reason: j.verdict === 'fail' ? 'Flammable gas above the limit.' : null,
          data: { verdict: j.verdict, place: 'work_area', purpose, testedAt: iso(at), readings: j.gases, instrument: instrumentName },
        }),
        entity_type: 'gas_test', entity_id: testId,
      });
      if (fails) suspendedAt = at + 2 * 60_000;
    }
    if (series)
      events.push({
        ...permitEvent(id, 'gas_tests_imported', series.at, as(tech, 'gas_tester'), {
          data: { rows: o.gasCount - 1, failing: 0, from: iso(series.from), to: iso(series.to), instrument: instrumentName, place: 'work_area' },
        }),
        entity_type: 'gas_test_series', entity_id: series.id,
      });
    if (o.workStarted !== null) events.push(permitEvent(id, 'start_work', o.workStarted, as(lead, 'contractor_lead'), { from_state: 'isolated', to_state: 'live' }));
    if (suspendedAt !== null)
      events.push(permitEvent(id, 'suspend', suspendedAt, null, { from_state: 'live', to_state: 'suspended', reason: 'failing gas test', data: { by: 'holdpoint' } }));
    const hotWorkEnded = o.handBack !== null && o.kinds.includes('hot_work') ? o.handBack - 70 * 60_000 : null;
    if (o.handBack !== null) {
      if (hotWorkEnded !== null) events.push(permitEvent(id, 'hot_work_stopped', hotWorkEnded, as(lead, 'contractor_lead'), { data: { fireWatchUntil: iso(hotWorkEnded + 60 * 60_000) } }));
      events.push(permitEvent(id, 'hand_back', o.handBack, as(lead, 'contractor_lead'), { from_state: 'live', to_state: 'work_complete', data: signed(lead) }));
    }
    if (o.closed !== null) {
      const rts = o.closed - 50 * 60_000;
      events.push(permitEvent(id, 'return_to_service', rts, as(authoriser, 'authoriser'), { from_state: 'work_complete', to_state: 'returned_to_service', data: signed(authoriser) }));
      events.push(permitEvent(id, 'acknowledge_return', rts + 20 * 60_000, as(control, 'control_room'), { from_state: 'returned_to_service', to_state: 'returned_to_service' }));
      events.push(permitEvent(id, 'close', o.closed, as(authoriser, 'authoriser'), { from_state: 'returned_to_service', to_state: 'closed' }));
    }
    const lastAt = o.closed ?? o.cancelledAt ?? suspendedAt ?? o.workStarted ?? o.accepted ?? approved;
    permits.add([
      id, tenantId, number, o.state, events.filter((e) => e.entity_type === 'permit' && e.to_state).length, `{${o.kinds.join(',')}}`, title,
      `Excavate, expose and repair the line between ${o.stationPoints[1].tag} and ${o.stationPoints[2].tag}.`, o.line.id, from.toFixed(3), to.toFixed(3),
      'Isolate between the two block valves, vent and drain the section, test the atmosphere, then repair.', 'Residual product and vapour; excavation edges.',
      '{"FR coveralls","Hard hat","Safety glasses","Gas monitor"}',
      JSON.stringify(checklistFor(o.kinds, 'before_work', o.accepted !== null ? lead : null, (o.accepted ?? 0) + 30 * 60_000)),
      JSON.stringify(checklistFor(o.kinds, 'walkdown', o.closed !== null ? authorisers[0] : null, (o.closed ?? 0) - 60 * 60_000)),
      iso(o.validFrom), iso(o.validTo), contractor.id, lead.id, lead.id, o.cancelledAt !== null ? null : authoriser.id, o.accepted !== null ? lead.id : null,
      settings.fireWatchMinutes, settings.gasTestWindowMinutes, settings.gasTestIntervalMinutes, hotWorkEnded !== null ? iso(hotWorkEnded) : null,
      o.closed !== null ? iso(o.closed - 30 * 60_000) : null, o.closed !== null ? control.id : null, null, iso(o.created), iso(lastAt),
      suspendedAt !== null ? 'system' : null, suspendedAt !== null ? iso(suspendedAt) : null, suspendedAt !== null ? 'failing gas test' : null,
    ]);
    for (const row of stepRows) steps.add(row);
    for (const row of gasRows) gas.add(row);
    return events;
  };

  // ---- Historic permits, oldest first; events go onto the chain in time order -----------------
  progress.setPhase('historic permits');
  const states = Array.from({ length: SCALE.historicPermits }, () => (rnd.chance(0.08) ? 'cancelled' : 'closed'));
  const liveStates = Array.from({ length: SCALE.livePermits }, () => {
    const x = rnd.next();
    return x < 0.7 ? 'live' : x < 0.82 ? 'isolated' : x < 0.92 ? 'suspended' : 'accepted';
  });
  const liveGasCount = (s: string) => (s === 'live' ? 8 : s === 'suspended' ? 6 : s === 'isolated' ? 1 : 0);
  const liveGas = liveStates.reduce((n, s) => n + liveGasCount(s), 0);
  const closedCount = states.filter((s) => s === 'closed').length;
  const historicGas = Math.max(0, SCALE.gasReadings - liveGas);
  const gasBase = Math.floor(historicGas / closedCount);
  let gasExtra = historicGas - gasBase * closedCount;

  const spanStart = now.getTime() - 3 * 365 * DAY;
  const spanEnd = now.getTime() - 3 * DAY;
  const step = (spanEnd - spanStart) / SCALE.historicPermits;
  const inStore = lockIds.length - liveSteps;
  let pending: Event[] = [];
  const flushEvents = (before: number) => {
    pending.sort((x, y) => +x.occurred_at - +y.occurred_at);
    let i = 0;
    while (i < pending.length && +pending[i].occurred_at < before) chain.append(pending[i++]);
    pending = pending.slice(i);
  };
  const BATCH = 500;
  for (let i = 0; i < SCALE.historicPermits; i++) {
    const line = lines[rnd.int(0, lines.length - 1)];
    const station = rnd.int(0, stationsPerPipeline - 1);
    const validFrom = Math.round(spanStart + i * step + rnd.int(0, 20) * 60_000);
    const closed = states[i] === 'closed';
    const accepted = validFrom + rnd.int(5, 40) * 60_000;
    const workStarted = accepted + 90 * 60_000;
    const gasCount = closed ? gasBase + (gasExtra-- > 0 ? 1 : 0) : 0;
    const handBack = workStarted + Math.max(gasCount, 1) * settings.gasTestIntervalMinutes * 60_000;
    const eventsOf = writePermit({
      state: states[i], kinds: rnd.pick(kindSets), line, stationPoints: line.points.slice(station * 5, station * 5 + 5), validFrom, validTo: validFrom + rnd.int(10, 14) * HOUR,
      created: validFrom - rnd.int(20, 60) * HOUR, stepStatus: 'removed', lockAt: () => liveSteps + rnd.int(0, inStore - 1), gasCount, lastGasFails: false,
      accepted: closed ? accepted : null, workStarted: closed ? workStarted : null, handBack: closed ? handBack : null, closed: closed ? handBack + rnd.int(90, 180) * 60_000 : null,
      suspended: false, cancelledAt: closed ? null : validFrom - rnd.int(1, 12) * HOUR, ackShare: 1,
    });
    pending.push(...eventsOf);
    if ((i + 1) % BATCH === 0) {
      // A permit made later is created at most 60 hours before its validity starts: nothing later can come before that.
      flushEvents(spanStart + (i + 1) * step - 61 * HOUR);
      await Promise.all([permits.room(), steps.room(), gas.room(), chain.insert.room()]);
    }
  }

  // ---- Live permits: the isolations in place now ------------------------------------------------
  progress.setPhase('live permits and isolations');
  let lockCursor = 0;
  const slotsPerLine = Math.floor(stationsPerPipeline / 2);
  for (let i = 0; i < SCALE.livePermits; i++) {
    const line = lines[i % lines.length];
    const slot = Math.floor(i / lines.length) % slotsPerLine;
    // One permit in twenty shares the valves of the permit before it on the line (group lockout).
    const shared = i % 20 === 19 && slot > 0;
    const station = (shared ? slot - 1 : slot) * 2;
    const state = liveStates[i];
    const working = state === 'live' || state === 'suspended';
    // Work under way has had a reading every interval up to the last few minutes; the others were accepted lately.
    const lastTest = now.getTime() - rnd.int(6, 25) * 60_000;
    const workStarted = working ? lastTest - (liveGasCount(state) - 1) * settings.gasTestIntervalMinutes * 60_000 + 15 * 60_000 : null;
    const accepted = workStarted !== null ? workStarted - 100 * 60_000 : now.getTime() - rnd.int(100, 240) * 60_000;
    const validFrom = accepted - rnd.int(5, 30) * 60_000;
    const base = lockCursor;
    lockCursor += SCALE.stepsPerLivePermit;
    const eventsOf = writePermit({
      state, kinds: rnd.pick(kindSets), line, stationPoints: line.points.slice(station * 5, station * 5 + 5), validFrom, validTo: validFrom + 16 * HOUR,
      created: validFrom - rnd.int(20, 48) * HOUR, stepStatus: state === 'accepted' ? 'applied' : 'verified', lockAt: (k) => base + k, gasCount: liveGasCount(state),
      lastGasFails: state === 'suspended', accepted, workStarted, handBack: null, closed: null,
      suspended: state === 'suspended', cancelledAt: null, ackShare: 0.9,
    });
    pending.push(...eventsOf);
    if ((i + 1) % BATCH === 0) await Promise.all([permits.room(), steps.room(), gas.room(), chain.insert.room()]);
  }
  flushEvents(Number.POSITIVE_INFINITY);

  // Permits first (the steps and readings point at them), then the rest.
  await permits.done();
  await Promise.all([steps.done(), gas.done()]);
  await chain.finish(a);
  for (const [year, last] of sequences)
    await a.query(
      `INSERT INTO permit_sequences (tenant_id, year, last) VALUES ($1, $2, $3) ON CONFLICT (tenant_id, year) DO UPDATE SET last = GREATEST(permit_sequences.last, EXCLUDED.last)`,
      [tenantId, year, last],
    );
  progress.setPhase('indexes and vacuum');
  await restoreForeignKeys();
  await rebuildIndexes();
  // Statistics for the planner, and the visibility map that lets index-only scans skip the heap
  // (autovacuum would get there later, in the middle of a benchmark).
  await a.query('VACUUM (ANALYZE)');
  progress.finish();

  const counts = await one<Record<string, number>>(
    `SELECT (SELECT count(*) FROM pipelines WHERE tenant_id = $1)::int AS pipelines, (SELECT count(*) FROM isolation_points WHERE tenant_id = $1)::int AS points,
            (SELECT count(*) FROM permits WHERE tenant_id = $1)::int AS permits, (SELECT count(*) FROM isolation_steps WHERE tenant_id = $1 AND status IN ('applied','verified'))::int AS applied,
            (SELECT count(*) FROM gas_tests WHERE tenant_id = $1)::int AS gas_readings, (SELECT count(*) FROM audit_events WHERE tenant_id = $1)::int AS audit_events`,
    [tenantId],
  );
  // The database's share: the two sessions that wrote everything (an index build's parallel workers are not counted).
  const dbCpu = await Promise.all([backendCpuSeconds(a), backendCpuSeconds(b)]);
  await Promise.all([a.end(), b.end()]);
  return { built: true, tenantId, counts, seconds: (Date.now() - started) / 1000, databaseCpuSeconds: dbCpu.every((x) => x !== null) ? dbCpu[0]! + dbCpu[1]! : null };
}
