// The Settings page's API: the tenant admin reads and changes the site's settings; each change is
// one audit event with the settings before and after in words, and a change that weakens a safety
// margin needs a reason.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TenantSettingsView } from '@shared/types/tenant-settings';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

describe('tenant settings: the site settings a tenant admin keeps', () => {
  let srv: TestServer;
  let admin: ApiClient;
  let tenantId: string;
  let otherTenantId: string;

  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const stored = async (id: string) => (await q<{ settings: Record<string, unknown>; time_zone: string }>(`SELECT settings, time_zone FROM tenants WHERE id = :id`, { id }))[0];
  const settingsEvents = async (id: string) =>
    q<{ seq: number; reason: string | null; data: Record<string, string>; actor_name: string }>(`SELECT seq, reason, data, actor_name FROM audit_events WHERE tenant_id = :id AND action = 'settings_changed' ORDER BY seq`, { id });

  beforeAll(async () => {
    srv = await startTestServer();
    admin = await srv.signIn(users.admin);
    [{ id: tenantId }] = await q<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'bramblecote'`);
    [{ id: otherTenantId }] = await q<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'harlowridge'`);
  });
  afterAll(async () => {
    await srv.close();
  });

  it('settings 1: when the tenant admin opens the settings of the demo, then each demo tenant has a records address on its own domain', async () => {
    const res = await admin.get('/api/tenant/settings');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ timeZone: 'America/Chicago', recordsEmail: 'records@bramblecote.example', auditCheckpointHours: 24, isolationRecheckHours: 168, requireDailyBumpTest: true, fireWatchBasis: 'nfpa_51b_2019', hotWorkLelPct: 0 });
    expect((await stored(otherTenantId)).settings.recordsEmail).toBe('records@harlowridge.example');
  });

  it('settings 2: when the admin changes the records address, the re-check interval and the zone, then they are stored, audited in words in one event, and the other tenant is untouched', async () => {
    const otherBefore = await stored(otherTenantId);
    const ownBefore = await stored(tenantId);
    const eventsBefore = (await settingsEvents(tenantId)).length;
    const res = await admin.patch('/api/tenant/settings', { recordsEmail: 'records-office@bramblecote.example', isolationRecheckHours: 72, timeZone: 'America/Denver' });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toMatchObject({ recordsEmail: 'records-office@bramblecote.example', isolationRecheckHours: 72, timeZone: 'America/Denver' });

    const after = await stored(tenantId);
    expect(after.time_zone).toBe('America/Denver');
    expect(after.settings).toMatchObject({ recordsEmail: 'records-office@bramblecote.example', isolationRecheckHours: 72 });
    // The other features' keys in the same document stay as they were.
    for (const [key, value] of Object.entries(ownBefore.settings)) if (!['recordsEmail', 'isolationRecheckHours'].includes(key)) expect(after.settings[key], key).toEqual(value);

    const events = await settingsEvents(tenantId);
    expect(events).toHaveLength(eventsBefore + 1);
    expect(events.at(-1)!.data).toEqual({
      'Site time zone': 'America/Chicago → America/Denver',
      'Records address for signed audit checkpoints': 'records@bramblecote.example → records-office@bramblecote.example',
      'Re-check long-term isolations every': 'every 168 hours → every 72 hours',
    });
    // The audit log shows it in words, and the chain still verifies.
    const auditor = await srv.signIn(users.auditor);
    const log = await auditor.get('/api/audit/events?kind=settings_changed');
    expect(log.body.items[0]).toMatchObject({ actionLabel: 'Site settings changed', details: expect.arrayContaining(['Re-check long-term isolations every: every 168 hours → every 72 hours']) });
    expect(JSON.stringify(log.body.items[0].details)).not.toMatch(/recheck|Hours|_/);
    expect((await auditor.get('/api/audit/verify')).body).toMatchObject({ ok: true });
    // The settings the features read now hold the change.
    expect((await admin.get('/api/auth/me')).body.activeTenant.timeZone).toBe('America/Denver');

    expect(await stored(otherTenantId)).toEqual(otherBefore);
    expect(await settingsEvents(otherTenantId)).toHaveLength(0);

    // The same values again change nothing and add no event.
    expect((await admin.patch('/api/tenant/settings', { isolationRecheckHours: 72 })).status).toBe(200);
    expect(await settingsEvents(tenantId)).toHaveLength(eventsBefore + 1);
    // An empty address means none: checkpoints are then only stored. Taking it away weakens the record, so it needs a reason.
    expect((await admin.patch('/api/tenant/settings', { recordsEmail: '' })).body.error.details).toEqual([{ path: 'reason', message: expect.stringMatching(/^Say why: signed audit checkpoints no longer mailed/) }]);
    const cleared = await admin.patch('/api/tenant/settings', { recordsEmail: '', reason: 'Records office closed; a new address follows.' });
    expect(cleared.body.recordsEmail).toBeNull();
    expect((await stored(tenantId)).settings).not.toHaveProperty('recordsEmail');
    expect((await admin.patch('/api/tenant/settings', { recordsEmail: 'records@bramblecote.example' })).status).toBe(200);
  });

  it('settings 3: when anyone but the tenant admin reads or changes the settings, then it is refused with 403 and nothing changes', async () => {
    const before = await stored(tenantId);
    for (const email of [users.authoriser, users.auditor, users.control, users.lead, users.tech, users.otherTenant]) {
      const client = await srv.signIn(email);
      expect((await client.get('/api/tenant/settings')).status, email).toBe(403);
      const res = await client.patch('/api/tenant/settings', { isolationRecheckHours: 24 });
      expect(res.status, email).toBe(403);
      expect(res.body.error.code).toBe('forbidden');
    }
    expect(await stored(tenantId)).toEqual(before);
    expect(await stored(otherTenantId).then((r) => r.settings.isolationRecheckHours)).toBeUndefined();
    // Signed out: 401.
    expect((await srv.request.get('/api/tenant/settings')).status).toBe(401);
  });

  it('settings 4: when a value is out of its limits, then the answer is 400 naming that field in plain words and nothing is written', async () => {
    const before = await stored(tenantId);
    const events = (await settingsEvents(tenantId)).length;
    const bad: Array<[Record<string, unknown>, string]> = [
      [{ timeZone: 'Mars/Olympus_Mons' }, 'timeZone'],
      [{ timeZone: '+05:00' }, 'timeZone'],
      [{ timeZone: '' }, 'timeZone'],
      [{ recordsEmail: 'records at bramblecote' }, 'recordsEmail'],
      [{ recordsEmail: 'records@bramblecote.example\r\nBcc: someone@elsewhere.example' }, 'recordsEmail'],
      [{ auditCheckpointHours: 0 }, 'auditCheckpointHours'],
      [{ auditCheckpointHours: 169 }, 'auditCheckpointHours'],
      [{ auditCheckpointHours: '24' }, 'auditCheckpointHours'],
      [{ isolationRecheckHours: 1.5 }, 'isolationRecheckHours'],
      [{ isolationRecheckHours: 200 }, 'isolationRecheckHours'],
      [{ gasTestOverdueGraceMinutes: 61 }, 'gasTestOverdueGraceMinutes'],
      [{ gasTestOverdueGraceMinutes: -1 }, 'gasTestOverdueGraceMinutes'],
      [{ requireDailyBumpTest: 'no' }, 'requireDailyBumpTest'],
      [{ fireWatchBasis: 'whenever' }, 'fireWatchBasis'],
      [{ fireWatchMinutes: 20 }, 'fireWatchMinutes'],
      [{ fireWatchMinutes: 45 }, 'fireWatchMinutes'],
      [{ hotWorkLelPct: 11, hotWorkLelReason: 'x', reason: 'y' }, 'hotWorkLelPct'],
      [{ hotWorkLelPct: 5, reason: 'Operator standard OS-114' }, 'hotWorkLelReason'],
      [{ maxPermitHours: 0 }, 'maxPermitHours'],
      [{ tenantId: otherTenantId }, 'tenantId'],
    ];
    for (const [body, field] of bad) {
      const res = await admin.patch('/api/tenant/settings', body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      expect(res.body.error.code).toBe('validation_failed');
      const detail = res.body.error.details.find((d: { path: string }) => d.path === field);
      expect(detail, `${JSON.stringify(body)} → ${JSON.stringify(res.body.error.details)}`).toBeDefined();
      expect(detail.message).not.toMatch(/expected|received|Invalid|NaN|_/);
    }
    expect(await stored(tenantId)).toEqual(before);
    expect(await settingsEvents(tenantId)).toHaveLength(events);
  });

  it('settings 5: when a change weakens a safety margin without a reason, then it is refused naming the reason; with one it is stored and the reason audited', async () => {
    const before = await stored(tenantId);
    const weakening: Array<[Record<string, unknown>, RegExp]> = [
      [{ requireDailyBumpTest: false }, /bump test/],
      [{ fireWatchBasis: 'osha_half_hour', fireWatchMinutes: 30 }, /OSHA half hour.*fire watch shortened to 30 minutes from 60/],
      [{ hotWorkLelPct: 5, hotWorkLelReason: 'Operator standard OS-114 for cold-cut then weld.' }, /up to 5 %LEL instead of 0 %LEL/],
      [{ gasTestOverdueGraceMinutes: 10 }, /10 minutes past an overdue gas test/],
      [{ isolationRecheckHours: 168 }, /re-checked every 168 hours instead of 72/],
      [{ gasTestIntervalMinutes: 60 }, /gas tests repeated every 60 minutes/],
    ];
    for (const [body, words] of weakening) {
      const res = await admin.patch('/api/tenant/settings', body);
      expect(res.status, JSON.stringify(body)).toBe(400);
      expect(res.body.error.details).toEqual([{ path: 'reason', message: expect.stringMatching(words) }]);
    }
    // A blank reason is no reason.
    expect((await admin.patch('/api/tenant/settings', { requireDailyBumpTest: false, reason: '   ' })).status).toBe(400);
    expect(await stored(tenantId)).toEqual(before);

    // Tightening needs none.
    expect((await admin.patch('/api/tenant/settings', { fireWatchMinutes: 90, auditCheckpointHours: 12 })).status).toBe(200);

    const reason = 'Detectors are bump-tested at each start of work instead (operator standard OS-201).';
    const res = await admin.patch('/api/tenant/settings', { requireDailyBumpTest: false, hotWorkLelPct: 5, hotWorkLelReason: 'Operator standard OS-114 for cold-cut then weld.', reason });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body as TenantSettingsView).toMatchObject({ requireDailyBumpTest: false, hotWorkLelPct: 5, hotWorkLelReason: 'Operator standard OS-114 for cold-cut then weld.' });
    const last = (await settingsEvents(tenantId)).at(-1)!;
    expect(last.reason).toBe(reason);
    expect(last.data).toMatchObject({ 'Gas detectors need a bump test each site day': 'yes → no', 'Flammable gas limit for hot work': '0 %LEL → 5 %LEL' });
    // The raised limit counts, with its stated reason as its source.
    const limits = await admin.post('/api/calc/atmosphere', { readings: { o2Pct: 20.9, lelPct: 3, h2sPpm: 0, coPpm: 0 }, hotWork: true });
    expect(JSON.stringify(limits.body)).toMatch(/OS-114/);
    // The reason cannot be taken away while the limit is above zero.
    const orphan = await admin.patch('/api/tenant/settings', { hotWorkLelReason: null });
    expect(orphan.status).toBe(400);
    expect(orphan.body.error.details[0].path).toBe('hotWorkLelReason');
  });
});
