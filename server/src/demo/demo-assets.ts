import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { resolveInsideDiameter } from '@shared/assets/inside-diameter';
import type { IsolationPointKind, NormalPosition, PipelineInput, ValveType } from '@shared/schemas/assets.schema';
import type { DemoSeeder } from './registry';

// Invented lines, places and tag codes. The Cedar Run lateral is the one later demos repair: a
// defect at MP 17.3 sits between block valves CR-BV-149 and CR-BV-197, with a vent and a drain
// just inside each valve.

interface DemoPoint {
  tag: string;
  kind: IsolationPointKind;
  at: number;
  description?: string;
  valve?: [ValveType, NormalPosition, boolean];
}

interface DemoLine {
  tenant: string;
  pipeline: PipelineInput;
  sites: [string, number][];
  points: DemoPoint[];
}

const valve = (tag: string, at: number, type: ValveType, remote: boolean, description: string): DemoPoint => ({ tag, kind: 'block_valve', at, description, valve: [type, 'open', remote] });
const vent = (tag: string, at: number, description: string): DemoPoint => ({ tag, kind: 'vent', at, description });
const drain = (tag: string, at: number, description: string): DemoPoint => ({ tag, kind: 'drain', at, description });

export const demoLines: DemoLine[] = [
  {
    tenant: 'bramblecote',
    pipeline: {
      code: 'BM-10', name: 'BM-10 Cedar Run Lateral', product: 'refined_products', nps: 10, schedule: '40', mopPsig: 1100, startPosition: 0, endPosition: 30.4,
      notes: 'Gasoline and diesel batches from Cedar Run Station to Haddon Fork Terminal.',
    },
    sites: [['Cedar Run Station', 0], ['Tansy Hollow Station', 9.8], ['Haddon Fork Terminal', 30.4]],
    points: [
      valve('CR-BV-000', 0, 'gate', true, 'Station discharge valve, Cedar Run'),
      { tag: 'CR-EI-001', kind: 'isolator', at: 0, description: 'Mainline pump P-1 motor starter, MCC-1 bucket 3, Cedar Run Station' },
      { tag: 'CR-BL-002', kind: 'blind_position', at: 0.2, description: 'Spectacle blind flange downstream of the launcher' },
      valve('CR-BV-046', 4.6, 'ball', false, 'Mainline valve at Bellweather Road'),
      vent('CR-VT-047', 4.7, 'Vent downstream of CR-BV-046'),
      drain('CR-DR-048', 4.8, 'Drain downstream of CR-BV-046'),
      valve('CR-BV-098', 9.8, 'gate', true, 'Mainline valve, Tansy Hollow Station'),
      vent('CR-VT-099', 9.9, 'Vent downstream of CR-BV-098'),
      valve('CR-BV-149', 14.9, 'ball', false, 'Mainline valve at Gorse Lane'),
      vent('CR-VT-150', 15, 'Vent downstream of CR-BV-149'),
      drain('CR-DR-151', 15.1, 'Drain downstream of CR-BV-149'),
      drain('CR-DR-195', 19.5, 'Drain upstream of CR-BV-197'),
      vent('CR-VT-196', 19.6, 'Vent upstream of CR-BV-197'),
      valve('CR-BV-197', 19.7, 'ball', true, 'Mainline valve at Oriel Creek crossing'),
      drain('CR-DR-251', 25.1, 'Drain upstream of CR-BV-252'),
      valve('CR-BV-252', 25.2, 'gate', false, 'Mainline valve at Fenwick Ridge'),
      vent('CR-VT-253', 25.3, 'Vent downstream of CR-BV-252'),
      { tag: 'CR-MP-302', kind: 'mechanical_plug_position', at: 30.2, description: 'Hot-tap fitting for a line stop ahead of the terminal' },
      valve('CR-BV-304', 30.4, 'gate', true, 'Terminal inlet valve, Haddon Fork'),
    ],
  },
  {
    tenant: 'bramblecote',
    pipeline: {
      code: 'BM-16', name: 'BM-16 Haskins Creek Trunk', product: 'crude_oil', nps: 16, schedule: 'STD', mopPsig: 1440, startPosition: 0, endPosition: 42.7,
      notes: 'Crude gathering trunk from Haskins Creek tank farm.',
    },
    sites: [['Haskins Creek Tank Farm', 0], ['Marlow Flats Pump Station', 23.8], ['Cedar Run Station', 42.7]],
    points: [
      valve('HC-BV-000', 0, 'gate', true, 'Tank farm outlet valve'),
      valve('HC-BV-112', 11.2, 'ball', false, 'Mainline valve at County Road 9'),
      drain('HC-DR-113', 11.3, 'Drain downstream of HC-BV-112'),
      valve('HC-BV-238', 23.8, 'gate', true, 'Mainline valve, Marlow Flats Pump Station'),
      vent('HC-VT-239', 23.9, 'Vent downstream of HC-BV-238'),
      valve('HC-CV-310', 31, 'check', false, 'Check valve below the Sable River crossing'),
      valve('HC-BV-427', 42.7, 'gate', true, 'Station inlet valve, Cedar Run'),
    ],
  },
  {
    tenant: 'harlowridge',
    pipeline: {
      code: 'HR-8', name: 'HR-8 Juniper Flats Lateral', product: 'natural_gas', nps: 8, schedule: '40', mopPsig: 720, startPosition: 0, endPosition: 18.6,
      notes: 'Sales gas lateral to the Juniper Flats town border station.',
    },
    sites: [['Pinecrest Compressor Station', 0], ['Juniper Flats Border Station', 18.6]],
    points: [
      valve('JF-BV-000', 0, 'ball', true, 'Compressor station discharge valve'),
      valve('JF-BV-072', 7.2, 'ball', false, 'Mainline valve at Coyote Wash'),
      vent('JF-VT-073', 7.3, 'Blowdown downstream of JF-BV-072'),
      vent('JF-VT-185', 18.5, 'Blowdown upstream of JF-BV-186'),
      valve('JF-BV-186', 18.6, 'ball', true, 'Border station inlet valve'),
    ],
  },
];

export const demoInventory: { tenant: string; count: number }[] = [
  { tenant: 'bramblecote', count: 40 },
  { tenant: 'harlowridge', count: 10 },
];

const pad = (n: number) => String(n).padStart(3, '0');

/** Idempotent: each row is found by its natural key (code, tag code, site name, lock/tag number) and left alone when present. */
export const seedAssets: DemoSeeder = async (sequelize: Sequelize, ids, t: Transaction) => {
  const run = (sql: string, replacements: Record<string, unknown>) => sequelize.query(sql, { replacements, transaction: t });
  for (const line of demoLines) {
    const tenantId = ids.tenants[line.tenant];
    const p = line.pipeline;
    const bore = resolveInsideDiameter(p);
    await run(
      `INSERT INTO pipelines (tenant_id, code, name, product, nps, schedule, inside_diameter_in, inside_diameter_source, mop_psig, start_position, end_position, notes)
       VALUES (:tenantId, :code, :name, :product, :nps, :schedule, :bore, :source, :mop, :start, :end, :notes) ON CONFLICT (tenant_id, code) DO NOTHING`,
      { tenantId, code: p.code, name: p.name, product: p.product, nps: p.nps, schedule: p.schedule, bore: bore.idIn, source: bore.source, mop: p.mopPsig, start: p.startPosition, end: p.endPosition, notes: p.notes },
    );
    const [{ id: pipelineId }] = await sequelize.query<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :tenantId AND code = :code`, {
      replacements: { tenantId, code: p.code },
      type: QueryTypes.SELECT,
      transaction: t,
    });
    for (const [name, position] of line.sites) {
      await run(`INSERT INTO pipeline_sites (tenant_id, pipeline_id, name, position) VALUES (:tenantId, :pipelineId, :name, :position) ON CONFLICT (tenant_id, pipeline_id, lower(name)) DO NOTHING`, {
        tenantId, pipelineId, name, position,
      });
    }
    for (const pt of line.points) {
      await run(
        `INSERT INTO isolation_points (tenant_id, pipeline_id, tag_code, kind, position, description, valve_type, normal_position, remotely_operable)
         VALUES (:tenantId, :pipelineId, :tag, :kind, :at, :description, :type, :normal, :remote) ON CONFLICT (tenant_id, tag_code) DO NOTHING`,
        { tenantId, pipelineId, tag: pt.tag, kind: pt.kind, at: pt.at, description: pt.description ?? null, type: pt.valve?.[0] ?? null, normal: pt.valve?.[1] ?? null, remote: pt.valve?.[2] ?? null },
      );
    }
  }
  for (const { tenant, count } of demoInventory) {
    for (let n = 1; n <= count; n++) {
      for (const [table, prefix] of [['locks', 'L'], ['tags', 'T']] as const) {
        await run(`INSERT INTO ${table} (tenant_id, number, state) VALUES (:tenantId, :number, 'in_store') ON CONFLICT (tenant_id, number) DO NOTHING`, { tenantId: ids.tenants[tenant], number: `${prefix}-${pad(n)}` });
      }
    }
  }
};
