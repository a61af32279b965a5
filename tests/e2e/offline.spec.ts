import { expect, test, type Page } from '@playwright/test';
import { acceptedPermit, apiAs, bumpTestedMonitor, ok, takeLive, transition } from './api-helpers';
import { DEMO_PASSWORD, guideShot } from './helpers';

// Issue 18, working without signal: the gas tester records on a phone with no connection; the records
// wait on the device and arrive once each, with the times they were made, when the signal comes back.
const PHONE = { width: 390, height: 844 };
test.use({ viewport: PHONE, hasTouch: true, isMobile: true });

const TESTER = 'tech@oxbow-repair.example';
// HC-DR-004 is this file's own drain (made below): the register's only BM-16 drain is locked by group-lockout.spec.ts.
const DRAIN = 'HC-DR-004';
const LIVE_POINTS = ['HC-BV-000', DRAIN];
const OTHER_POINT = 'CR-DR-195';
// A temporary plug of this file's own (no register point), so the gas tester has a plug to check.
const PLUG = 'Offline plug east of HC-BV-000';

let live: { id: string; number: string };
let other: { id: string; number: string };
let monitor: { id: string; serial: string };

test.beforeAll(async () => {
  test.setTimeout(180_000);
  const admin = await apiAs('admin@bramblecote.example');
  try {
    const pipes = await ok<{ items: { id: string; code: string }[] }>(admin.get('/api/pipelines?q=BM-16&pageSize=50'));
    const pipelineId = pipes.items.find((p) => p.code === 'BM-16')!.id;
    await ok(admin.post('/api/isolation-points', { pipelineId, tagCode: DRAIN, kind: 'drain', position: 0.4 }), 201);
  } finally {
    await admin.close();
  }
  // Two permits of this file's own, on points no other browser test locks: one live with a gas test due and a temporary plug to check, one accepted with a drain still to open.
  live = await acceptedPermit('Offline: repack the gland of HC-BV-000', LIVE_POINTS, 'BM-16', [{ tempLabel: PLUG, tempPosition: 0, kind: 'plug', plugDiameterIn: 10.02 }]);
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

/** Waits until the service worker is active, its precache complete (it activates only after that). */
async function workerActive(page: Page) {
  return page.evaluate(async () => {
    const registration = await navigator.serviceWorker.ready;
    const worker = registration.active!;
    if (worker.state !== 'activated') await new Promise((resolve) => worker.addEventListener('statechange', () => worker.state === 'activated' && resolve(undefined)));
    return { state: worker.state };
  });
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

test('issue 18: when the gas tester records two gas tests and a plug check and opens a drain without signal, then they wait on the phone, also across a reload without signal, and arrive once each with their times; the failing test suspends the permit, another open page of it shows the alarm within 2 s, and a refused application shows its reason', async ({ page, context, browser }) => {
  test.setTimeout(180_000);
  await signIn(page, TESTER);
  // The app must open from the service worker later on: wait until it has everything it needs on the phone.
  expect((await workerActive(page)).state).toBe('activated');
  // Online first, as on site before walking out of signal: the screens and the permit's data are on the device.
  for (const path of [`/permits/${live.id}/gas-test`, `/permits/${live.id}/check?kind=plug`, `/permits/${other.id}`, '/outbox', `/permits/${live.id}`]) {
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
  const checksOf = async () => {
    const api = await apiAs(TESTER);
    try {
      return (await ok<{ items: { id: string; kind: string; checkedAt: string; ok: boolean }[] }>(api.get(`/api/permits/${live.id}/checks?pageSize=100`))).items;
    } finally {
      await api.close();
    }
  };
  const before = new Set((await testsOf()).map((t) => t.id));
  const checksBefore = new Set((await checksOf()).map((c) => c.id));
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

  // The plug's face checked without signal, before the failing test stops the work.
  await goInApp(page, `/permits/${live.id}/check?kind=plug`);
  const check = page.getByRole('form', { name: 'Record a plug check' });
  await check.getByLabel('Which plug').selectOption({ label: PLUG });
  await check.getByLabel('Plug face').selectOption('intact');
  await check.getByRole('button', { name: 'Record plug check' }).tap();
  await expect(page.getByText('Saved on this device').first()).toBeVisible();

  await goInApp(page, `/permits/${live.id}/gas-test`);
  await recordGasTest(page, { o2: '17.5', lel: '0' });
  await expect(page.getByTestId('outbox-badge')).toHaveText('4 records waiting to send');

  // What the phone shows offline comes from the device, with how old it is.
  await goInApp(page, `/permits/${live.id}`);
  await expect(page.getByTestId('as-of')).toContainText('As of');

  await goInApp(page, '/outbox');
  await expect(page.getByRole('heading', { name: 'Outbox', level: 1 })).toBeVisible();

  // Still without signal, the app is opened again (a reload): it comes from the service worker, and the records still wait.
  const reloaded = await page.reload();
  expect(reloaded?.fromServiceWorker(), 'the reload comes from the service worker').toBe(true);
  await expect(page.getByRole('heading', { name: 'Outbox', level: 1 })).toBeVisible();
  await expect(page.getByTestId('connection-status')).toContainText('Offline since');
  await expect(page.getByTestId('outbox-badge')).toHaveText('4 records waiting to send');
  await expect(page.getByTestId('waiting-note')).toHaveCount(4);
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

  // The contractor lead has the permit open on another phone, with signal, following it live.
  const leadContext = await browser.newContext({ viewport: PHONE, hasTouch: true, isMobile: true });
  try {
    // When the alarm first appears on the lead's screen, by the same clock as this test's.
    await leadContext.addInitScript((number) => {
      const observer = new MutationObserver(() => {
        const shown = [...document.querySelectorAll('[data-testid="alarm"]')].some((a) => a.textContent?.includes(`Permit ${number} was suspended`));
        if (shown) {
          (window as Window & { alarmShownAt?: number }).alarmShownAt = Date.now();
          observer.disconnect();
        }
      });
      observer.observe(document, { childList: true, subtree: true });
    }, live.number);
    const leadPage = await leadContext.newPage();
    await signIn(leadPage, 'lead@oxbow-repair.example');
    const following = leadPage.waitForResponse((r) => r.url().includes('/api/stream?') && r.url().includes(live.id) && r.status() === 200);
    await leadPage.goto(`/permits/${live.id}`);
    await expect(leadPage.getByTestId('permit-state').first()).toHaveText(/Live work/);
    await following;
    // Let the stream settle on the permit (its "ready") before the change.
    await leadPage.waitForTimeout(500);

    // When the phone's failing test reached the server: its answer, as the phone got it.
    let failingAnsweredAt: number | undefined;
    page.on('response', (r) => {
      if (r.request().method() === 'POST' && new URL(r.url()).pathname === `/api/permits/${live.id}/gas-tests` && r.request().postData()?.includes('17.5')) failingAnsweredAt = Date.now();
    });

    const backOnline = Date.now();
    await context.setOffline(false);
    await expect(page.getByTestId('connection-status')).toContainText(/Back online|not accepted/);
    await expect(page.getByTestId('refusal-reason')).toBeVisible({ timeout: 30_000 });
    await expect(page.getByText('Waiting to send')).toHaveCount(0, { timeout: 30_000 });
    await expect(page.getByTestId('refusal-reason')).not.toBeEmpty();
    await guideShot(page, 'offline-outbox-refused');

    const alarm = leadPage.getByRole('alert').filter({ hasText: `Permit ${live.number} was suspended` });
    await expect(alarm).toBeVisible({ timeout: 5_000 });
    await expect(leadPage.getByTestId('permit-state').first()).toHaveText(/Suspended/);
    const shownAt = await leadPage.evaluate(() => (window as Window & { alarmShownAt?: number }).alarmShownAt);
    expect(failingAnsweredAt, 'the failing test was sent').toBeDefined();
    expect(shownAt, 'the alarm was seen appearing').toBeDefined();
    const shownAfter = shownAt! - failingAnsweredAt!;
    console.log(`offline: the suspension by the failing test was shown on the lead's page ${shownAfter} ms after the phone's record was answered`);
    expect(shownAfter).toBeLessThan(2_000);

    const offlineTests = (await testsOf()).filter((t) => !before.has(t.id));
    // Once each, with the time taken on the phone while it had no signal, not the time they arrived.
    expect(offlineTests.map((t) => t.verdict).sort()).toEqual(['fail', 'pass']);
    for (const t of offlineTests) {
      expect(new Date(t.testedAt).getTime()).toBeGreaterThanOrEqual(wentOffline - 1_000);
      expect(new Date(t.testedAt).getTime()).toBeLessThanOrEqual(backOnline);
    }
    const offlineChecks = (await checksOf()).filter((c) => !checksBefore.has(c.id));
    expect(offlineChecks.map((c) => [c.kind, c.ok])).toEqual([['plug', true]]);
    expect(new Date(offlineChecks[0].checkedAt).getTime()).toBeGreaterThanOrEqual(wentOffline - 1_000);
    expect(new Date(offlineChecks[0].checkedAt).getTime()).toBeLessThanOrEqual(backOnline);
    const api = await apiAs(TESTER);
    try {
      const permit = await ok<{ state: string }>(api.get(`/api/permits/${live.id}`));
      expect(permit.state).toBe('suspended');
    } finally {
      await api.close();
    }
  } finally {
    await leadContext.close();
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
  // Signed out once the app has taken the person to the sign-in form.
  await expect(page.getByLabel('E-mail')).toBeVisible();
  await signIn(page, 'authoriser@bramblecote.example');
  await page.goto(`/permits/${waiting.id}`);
  const approve = page.getByTestId('action-approve');
  await expect(approve).toBeVisible();
  await context.setOffline(true);
  await expect(approve.getByRole('button')).toBeDisabled();
  await expect(approve).toContainText('Needs a connection: this grants permission to work.');
  await context.setOffline(false);
});
