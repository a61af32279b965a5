import { expect, test, type Page } from '@playwright/test';
import { acceptedPermit, apiAs, bumpTestedMonitor, ok, takeLive, transition } from './api-helpers';
import { DEMO_PASSWORD, guideShot } from './helpers';

// Issue 18, working without signal: the gas tester records on a phone with no connection; the records
// wait on the device and arrive once each, with the times they were made, when the signal comes back.
const PHONE = { width: 390, height: 844 };
test.use({ viewport: PHONE, hasTouch: true, isMobile: true });

const TESTER = 'tech@oxbow-repair.example';
const LIVE_POINTS = ['HC-BV-000', 'HC-DR-113'];
const OTHER_POINT = 'CR-DR-195';

let live: { id: string; number: string };
let other: { id: string; number: string };
let monitor: { id: string; serial: string };

test.beforeAll(async () => {
  test.setTimeout(180_000);
  // Two permits of this file's own, on points no other browser test locks: one live with a gas test due, one accepted with a drain still to open.
  live = await acceptedPermit('Offline: repack the gland of HC-BV-000', LIVE_POINTS, 'BM-16');
  await takeLive(live.id);
  other = await acceptedPermit(`Offline: flush the drain at ${OTHER_POINT}`, [OTHER_POINT]);
  monitor = await bumpTestedMonitor();
});

async function signIn(page: Page, email: string) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('button', { name: 'Menu' })).toBeVisible();
}

/** Moves inside the app without asking the server for the page, as a tap on a link does. */
async function goInApp(page: Page, path: string) {
  await page.evaluate((to) => {
    window.history.pushState({}, '', to);
    window.dispatchEvent(new PopStateEvent('popstate'));
  }, path);
  await expect(page).toHaveURL(new RegExp(`${path.replace(/[?]/g, '\\?')}$`));
}

async function recordGasTest(page: Page, readings: { o2: string; lel: string }) {
  const form = page.getByRole('form', { name: 'Record a gas test' });
  await form.getByLabel('Instrument', { exact: true }).selectOption(monitor.id);
  await form.getByLabel('Oxygen, O₂ (% vol)').fill(readings.o2);
  await form.getByLabel('Flammable gas (% LEL)').fill(readings.lel);
  await form.getByLabel('H₂S (ppm)').fill('0');
  await form.getByLabel('CO (ppm)').fill('1');
  const notes = form.getByLabel(/Notes/);
  if (await notes.count()) await notes.first().fill('Recorded without signal');
  await form.getByRole('button', { name: 'Record gas test' }).tap();
  await expect(page.getByText('Saved on this device').first()).toBeVisible();
}

test('issue 18: when the gas tester records two gas tests and opens a drain without signal, then they wait on the phone and arrive once each with their times; the failing test suspends the permit and a refused application shows its reason', async ({ page, context }) => {
  test.setTimeout(180_000);
  await signIn(page, TESTER);
  // Online first, as on site before walking out of signal: the screens and the permit's data are on the device.
  for (const path of [`/permits/${live.id}/gas-test`, `/permits/${other.id}`, '/outbox', `/permits/${live.id}`]) {
    await page.goto(path);
    await expect(page.getByRole('heading', { level: 1 })).toBeVisible();
    // The device's copy is written at most once a second: a person reading the screen gives it that time.
    await page.waitForTimeout(1_500);
  }
  await page.goto(`/permits/${other.id}`);
  await page.getByRole('link', { name: `Apply ${OTHER_POINT}` }).tap();
  const applyUrl = new URL(page.url()).pathname;
  const apply = page.getByTestId('apply-form');
  await expect(apply).toBeVisible();

  const testsOf = async () => {
    const api = await apiAs(TESTER);
    try {
      return (await ok<{ items: { id: string; testedAt: string; verdict: string }[] }>(api.get(`/api/permits/${live.id}/gas-tests?pageSize=100`))).items;
    } finally {
      await api.close();
    }
  };
  const before = new Set((await testsOf()).map((t) => t.id));
  await context.setOffline(true);
  const wentOffline = Date.now();
  await expect(page.getByTestId('connection-status')).toContainText('Offline since');

  // A drain opened without signal; the step waits in the outbox.
  await apply.getByRole('checkbox').check();
  const lock = apply.getByLabel('Lock', { exact: true });
  if (await lock.count()) await lock.selectOption({ index: 1 });
  const tag = apply.getByLabel('Danger tag', { exact: true });
  if (await tag.count()) await tag.selectOption({ index: 1 });
  await apply.getByRole('button', { name: 'Record as applied' }).tap();
  await expect(page.getByText('Saved on this device').first()).toBeVisible();
  expect(new URL(page.url()).pathname === applyUrl || page.url().includes(`/permits/${other.id}`)).toBe(true);

  await goInApp(page, `/permits/${live.id}/gas-test`);
  await recordGasTest(page, { o2: '20.9', lel: '0' });
  await recordGasTest(page, { o2: '17.5', lel: '0' });
  await expect(page.getByTestId('outbox-badge')).toHaveText('3 records waiting to send');

  // What the phone shows offline comes from the device, with how old it is.
  await goInApp(page, `/permits/${live.id}`);
  await expect(page.getByTestId('as-of')).toContainText('As of');

  await goInApp(page, '/outbox');
  await expect(page.getByRole('heading', { name: 'Outbox', level: 1 })).toBeVisible();
  await guideShot(page, 'offline-outbox-waiting');

  // Meanwhile, with signal, the second technician records the same drain first: the queued application will be refused.
  const tech2 = await apiAs('tech2@oxbow-repair.example');
  try {
    const plan = await ok<{ items: { id: string; kind: string }[] }>(tech2.get(`/api/permits/${other.id}/isolations`));
    const body: Record<string, unknown> = {};
    if (plan.items[0].kind === 'block_valve') {
      body.lockId = (await ok<{ items: { id: string }[] }>(tech2.get('/api/locks?state=in_store&pageSize=50'))).items.at(-1)!.id;
      body.tagId = (await ok<{ items: { id: string }[] }>(tech2.get('/api/tags?state=in_store&pageSize=50'))).items.at(-1)!.id;
    }
    await ok(tech2.post(`/api/permits/${other.id}/isolations/${plan.items[0].id}/apply`, body));
  } finally {
    await tech2.close();
  }

  const backOnline = Date.now();
  await context.setOffline(false);
  await expect(page.getByTestId('connection-status')).toContainText(/Back online|not accepted/);
  await expect(page.getByTestId('refusal-reason')).toBeVisible({ timeout: 30_000 });
  await expect(page.getByText('Waiting to send')).toHaveCount(0, { timeout: 30_000 });
  await expect(page.getByTestId('refusal-reason')).not.toBeEmpty();
  await guideShot(page, 'offline-outbox-refused');

  const api = await apiAs(TESTER);
  try {
    const offlineTests = (await testsOf()).filter((t) => !before.has(t.id));
    // Once each, with the time taken on the phone while it had no signal, not the time they arrived.
    expect(offlineTests.map((t) => t.verdict).sort()).toEqual(['fail', 'pass']);
    for (const t of offlineTests) {
      expect(new Date(t.testedAt).getTime()).toBeGreaterThanOrEqual(wentOffline - 1_000);
      expect(new Date(t.testedAt).getTime()).toBeLessThanOrEqual(backOnline);
    }
    const permit = await ok<{ state: string }>(api.get(`/api/permits/${live.id}`));
    expect(permit.state).toBe('suspended');
  } finally {
    await api.close();
  }

  // The refused record: discarded by the person, not lost by the app.
  await page.getByRole('button', { name: 'Discard' }).tap();
  await page.getByRole('button', { name: 'Yes, discard it' }).tap();
  await expect(page.getByText('Nothing waiting')).toBeVisible();
});

test('issue 18: when the contractor lead and the authoriser have no signal, then resuming work and approval are shown unavailable with the reason', async ({ page, context }) => {
  test.setTimeout(90_000);
  await signIn(page, 'lead@oxbow-repair.example');
  // The permit the failing test suspended above: resuming it would let the crew work again.
  await page.goto(`/permits/${live.id}`);
  const resume = page.getByTestId('action-resume');
  await expect(resume).toBeVisible();
  await context.setOffline(true);
  await expect(resume.getByRole('button')).toBeDisabled();
  await expect(resume).toContainText('Needs a connection: this grants permission to work.');
  await guideShot(page, 'offline-resume-unavailable', resume);
  await context.setOffline(false);

  // A permit of this file's own waiting for approval: sent by the lead, with the drain the refused record was about.
  const lead = await apiAs('lead@oxbow-repair.example');
  let waiting: { id: string };
  try {
    const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
    const rest = await ok<{ pipelineId: string; fromPosition: number; toPosition: number }>(lead.get(`/api/permits/${other.id}`));
    const created = await ok<{ id: string; version: number }>(
      lead.post('/api/permits', {
        kinds: ['cold_work'],
        title: 'Offline: approval needs a connection',
        scope: 'Inspect the coating beside the drain.',
        pipelineId: rest.pipelineId,
        fromPosition: rest.fromPosition,
        toPosition: rest.toPosition,
        methodStatement: 'Visual inspection only.',
        hazards: 'Slips on the right-of-way.',
        ppe: ['Gloves'],
        validFrom: new Date(Date.now() - 60_000).toISOString(),
        validTo: new Date(Date.now() + 8 * 3600_000).toISOString(),
        contractorOrganisationId: me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId,
      }),
      201,
    );
    expect((await transition(lead, created.id, 'submit')).state).toBe('requested');
    waiting = created;
  } finally {
    await lead.close();
  }
  await page.getByRole('button', { name: 'Menu' }).tap();
  await page.getByRole('button', { name: 'Sign out' }).tap();
  await signIn(page, 'authoriser@bramblecote.example');
  await page.goto(`/permits/${waiting.id}`);
  const approve = page.getByTestId('action-approve');
  await expect(approve).toBeVisible();
  await context.setOffline(true);
  await expect(approve.getByRole('button')).toBeDisabled();
  await expect(approve).toContainText('Needs a connection: this grants permission to work.');
  await context.setOffline(false);
});

// The plug check of the acceptance is not driven here: no register point left free for this file is a
// vent or a plug, so the permit has none to check; checks take the same outbox path as gas tests.
test.fixme('issue 18: when the app is reloaded without signal, then it opens from the device with the outbox (needs the service worker to serve the shell offline in this run)', async () => {});
