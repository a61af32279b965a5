import { expect, test, type Locator } from '@playwright/test';
import { acceptedPermit, apiAs, bumpTestedMonitor, ok, takeLive } from './api-helpers';
import { noSideScroll, openPermitSection, shot, signInOnPhone as signIn } from './helpers';

// Issue 18, one task per screen: a phone held in a gloved hand.
const PHONE = { width: 390, height: 844 };
test.use({ viewport: PHONE, hasTouch: true, isMobile: true });

const TESTER = 'tech@oxbow-repair.example';
const TECH2 = 'tech2@oxbow-repair.example';
const VALVE = 'CR-BV-304';
const VENT = 'CR-VT-196';

let permit: { id: string; number: string };
let monitor: { id: string; serial: string };

test.beforeAll(async () => {
  test.setTimeout(120_000);
  // A permit of this file's own, on a valve and a vent no other browser test uses; the tests below take it from accepted to live.
  permit = await acceptedPermit(`Grease the gate of ${VALVE} (task screens)`, [VALVE, VENT]);
  monitor = await bumpTestedMonitor();
});

/** Every tap (or choice from a list) on a control, counted; typing the readings is not. */
function tapCounter() {
  const counter = {
    taps: 0,
    tap: async (target: Locator) => {
      counter.taps++;
      await target.tap();
    },
    choose: async (target: Locator, value: { label: string } | string) => {
      counter.taps++;
      await target.selectOption(value);
    },
  };
  return counter;
}

/** The button is on the screen as it opened, within the phone's height: no scrolling to reach it. */
async function withinThumbReach(button: Locator) {
  await expect(button).toBeInViewport();
  const box = (await button.boundingBox())!;
  expect(box.y + box.height).toBeLessThanOrEqual(PHONE.height);
  expect(box.height, 'a gloved finger needs at least 48 px').toBeGreaterThanOrEqual(48);
}

async function typeReadings(form: Locator) {
  await form.getByLabel('Oxygen, O₂ (% vol)').fill('20.9');
  await form.getByLabel('Flammable gas (% LEL)').fill('0');
  await form.getByLabel('H₂S (ppm)').fill('0');
  await form.getByLabel('CO (ppm)').fill('1');
}

test('issue 18: when the gas tester records a gas test from the permit summary on a phone, then it takes at most 5 taps besides the four readings, and the next test starts with the same instrument and place', async ({ page }) => {
  test.setTimeout(90_000);
  await signIn(page, TESTER);
  await page.goto(`/permits/${permit.id}`);
  await expect(page.getByTestId('permit-summary')).toBeVisible();

  const first = tapCounter();
  await first.tap(page.getByRole('link', { name: 'Record a gas test' }));
  await expect(page).toHaveURL(new RegExp(`/permits/${permit.id}/gas-test$`));
  await expect(page.getByRole('heading', { name: 'Record a gas test', level: 1 })).toBeVisible();
  const form = page.getByRole('form', { name: 'Record a gas test' });
  const submit = form.getByRole('button', { name: 'Record gas test' });
  await withinThumbReach(submit);
  await expect(page.getByText('Caution', { exact: true })).toHaveCount(1);
  await first.choose(form.getByLabel('Instrument', { exact: true }), monitor.id);
  await expect(form.getByLabel('Where')).toHaveValue('work_area');
  await typeReadings(form);
  // The verdict shows while typing, before anything is sent.
  await expect(form.getByTestId('atmosphere-verdict')).toContainText('Pass');
  for (const field of ['Oxygen, O₂ (% vol)', 'CO (ppm)']) await expect(form.getByLabel(field)).toHaveAttribute('inputmode', 'decimal');
  await withinThumbReach(submit);
  await first.tap(submit);
  await expect(form.getByText('Last test recorded: pass')).toBeVisible();
  await noSideScroll(page);
  await shot(page, 'task-gas-test-phone');
  console.log(`gas test from the summary: ${first.taps} taps besides the four readings`);
  expect(first.taps).toBeLessThanOrEqual(5);

  // The second test: back to the summary and in again; the instrument and place come preselected from this device.
  const second = tapCounter();
  await second.tap(page.getByRole('link', { name: new RegExp(`^← ${permit.number}`) }));
  await expect(page.getByTestId('permit-summary')).toBeVisible();
  await second.tap(page.getByRole('link', { name: 'Record a gas test' }));
  await expect(form.getByLabel('Instrument', { exact: true })).toHaveValue(monitor.id);
  await expect(form.getByLabel('Where')).toHaveValue('work_area');
  await typeReadings(form);
  await second.tap(submit);
  await expect(form.getByText('Last test recorded: pass')).toBeVisible();
  console.log(`second gas test from the summary: ${second.taps} taps besides the four readings`);
  expect(second.taps).toBeLessThanOrEqual(3);

  const api = await apiAs(TESTER);
  try {
    const tests = await ok<{ items: { instrument: { id: string } | null; place: string }[] }>(api.get(`/api/permits/${permit.id}/gas-tests?pageSize=10`));
    expect(tests.items).toHaveLength(2);
    for (const t of tests.items) expect(t).toMatchObject({ instrument: { id: monitor.id }, place: 'work_area' });
  } finally {
    await api.close();
  }
});

test('issue 18: when technicians open the permit summary on a phone, then applying and verifying a step are each one tap away on a screen of their own', async ({ page, browser }) => {
  test.setTimeout(90_000);
  await signIn(page, TESTER);
  await page.goto(`/permits/${permit.id}`);
  await page.getByRole('link', { name: `Apply ${VALVE}` }).tap();
  await expect(page).toHaveURL(new RegExp(`/permits/${permit.id}/steps/[^/]+/apply$`));
  await expect(page.getByRole('heading', { name: `Apply ${VALVE}`, level: 1 })).toBeVisible();
  const apply = page.getByTestId('apply-form');
  const record = apply.getByRole('button', { name: 'Record as applied' });
  await withinThumbReach(record);
  // A field left empty is named beside it, on this screen.
  await apply.getByRole('checkbox').check();
  await record.tap();
  await expect(apply.getByText('Choose the lock you put on.')).toBeVisible();
  const lock = apply.getByLabel('Lock', { exact: true });
  await lock.selectOption({ index: 1 });
  await apply.getByLabel('Danger tag', { exact: true }).selectOption({ index: 1 });
  await record.tap();
  await expect(page).toHaveURL(new RegExp(`/permits/${permit.id}$`));
  await expect(page.getByRole('link', { name: `Apply ${VALVE}` })).toHaveCount(0);

  // The control room confirms remote operation is inhibited; then the second technician verifies it from their own phone.
  const control = await apiAs('control@bramblecote.example');
  try {
    const plan = await ok<{ items: { id: string; remotelyOperable: boolean }[] }>(control.get(`/api/permits/${permit.id}/isolations`));
    if (plan.items[0].remotelyOperable) await ok(control.post(`/api/permits/${permit.id}/isolations/${plan.items[0].id}/acknowledge`, { what: 'remote_inhibited' }));
  } finally {
    await control.close();
  }
  const context = await browser.newContext({ viewport: PHONE, hasTouch: true, isMobile: true });
  const tech2 = await context.newPage();
  await signIn(tech2, TECH2);
  await tech2.goto(`/permits/${permit.id}`);
  await tech2.getByRole('link', { name: `Verify ${VALVE}` }).tap();
  await expect(tech2.getByRole('heading', { name: `Verify ${VALVE}`, level: 1 })).toBeVisible();
  const verify = tech2.getByTestId('verify-form');
  await withinThumbReach(verify.getByRole('button', { name: 'Record verification' }));
  await verify.getByRole('checkbox').check();
  await verify.getByRole('button', { name: 'Record verification' }).tap();
  await expect(tech2).toHaveURL(new RegExp(`/permits/${permit.id}$`));
  await openPermitSection(tech2, 'Isolation plan');
  await expect(tech2.getByTestId('isolation-step').first()).toHaveAttribute('data-status', 'verified');
  await context.close();
});

test('issue 18: when the gas tester opens a live permit on a phone, then its summary fits in about two screens, shows the caution once, and its tasks and sections are one tap away', async ({ page }) => {
  test.setTimeout(120_000);
  await takeLive(permit.id);
  const live = permit;
  await signIn(page, TESTER);
  await page.goto(`/permits/${live.id}`);
  await expect(page.getByTestId('permit-summary')).toBeVisible();
  await expect(page.getByTestId('summary-due-list')).toBeVisible();
  await expect(page.getByTestId('task-links')).toBeVisible();
  const height = await page.evaluate(() => document.documentElement.scrollHeight);
  console.log(`live permit summary at 390×844: ${height} px high, ${(height / PHONE.height).toFixed(2)} screens (before: 18,748 px)`);
  expect(height).toBeLessThan(2.5 * PHONE.height);
  await expect(page.getByText('Caution', { exact: true })).toHaveCount(1);
  await noSideScroll(page);
  await shot(page, 'permit-summary-phone');

  // Each task screen this person may use is one tap from the summary.
  const tasks = page.getByTestId('task-links').getByRole('link');
  const targets = await tasks.evaluateAll((links) => links.map((a) => [a.textContent ?? '', a.getAttribute('href') ?? '']));
  expect(targets.map(([label]) => label)).toEqual(expect.arrayContaining(['Record a gas test', 'Record a vent check']));
  for (const [label, href] of targets) {
    await page.getByTestId('task-links').getByRole('link', { name: label, exact: true }).tap();
    await expect(page).toHaveURL(href);
    // Signing on and off is the crew screen, under the permit's own heading.
    if (href.endsWith('/crew')) await expect(page.getByRole('heading', { name: 'Lockbox' })).toBeVisible();
    else await expect(page.getByRole('heading', { level: 1 })).toHaveText(label);
    await expect(page.getByText('Caution', { exact: true })).toHaveCount(1);
    await page.goBack();
    await expect(page.getByTestId('permit-summary')).toBeVisible();
  }

  // The sections are one tap away too, with the caution once on each screen.
  await openPermitSection(page, 'Gas tests');
  await expect(page).toHaveURL(new RegExp(`/permits/${live.id}/gas-tests$`));
  await expect(page.getByTestId('gas-tests-section')).toBeVisible();
  await expect(page.getByText('Caution', { exact: true })).toHaveCount(1);
  await openPermitSection(page, 'Summary');
  await expect(page.getByTestId('permit-summary')).toBeVisible();
});

test('journey 4 finding: when the gas tester types the next test while the last one is still being saved, then the save\'s answer keeps the typed readings and place, clears only what was not touched since, and keeps the instrument', async ({ page }) => {
  test.setTimeout(120_000);
  // A permit of this test's own (on this file's valve), so the counts of the tests above stay theirs.
  const own = await acceptedPermit(`Stroke-test ${VALVE} (next test typed while saving)`, [VALVE]);
  await signIn(page, TESTER);
  // The server saves the test at once; its answer reaches the phone only when released (a slow signal).
  let release = () => {};
  const held = new Promise<void>((resolve) => (release = resolve));
  let saved = 0;
  await page.route(`**/api/permits/${own.id}/gas-tests`, async (route) => {
    if (route.request().method() !== 'POST') return route.fallback();
    const response = await route.fetch();
    saved++;
    await held;
    await route.fulfill({ response });
  });
  await page.goto(`/permits/${own.id}/gas-test`);
  const form = page.getByRole('form', { name: 'Record a gas test' });
  const o2 = form.getByLabel('Oxygen, O₂ (% vol)');
  const lel = form.getByLabel('Flammable gas (% LEL)');
  const h2s = form.getByLabel('H₂S (ppm)');
  const co = form.getByLabel('CO (ppm)');
  const where = form.getByLabel('Where');
  await form.getByLabel('Instrument', { exact: true }).selectOption(monitor.id);
  await where.selectOption('inside_pipe_upstream');
  await typeReadings(form);
  await form.getByLabel(/Notes/).fill('Upstream of the plug');
  await form.getByRole('button', { name: 'Record gas test' }).tap();
  await expect.poll(() => saved).toBe(1);

  // The next test, typed while the first one's answer is still on its way.
  await where.selectOption('work_area');
  await o2.fill('20.8');
  await lel.fill('1');
  release();
  await expect(form.getByText('Last test recorded: pass')).toBeVisible();
  // Give the permit's pages time to be read again after the save: nothing may change under the person then either.
  await expect(form.getByRole('button', { name: 'Record gas test' })).toBeEnabled();
  await page.waitForTimeout(2_000);
  await expect(o2).toHaveValue('20.8');
  await expect(lel).toHaveValue('1');
  await expect(where).toHaveValue('work_area');
  // What was not touched since the first test was sent starts afresh; the instrument stays for the next test.
  await expect(h2s).toHaveValue('');
  await expect(co).toHaveValue('');
  await expect(form.getByLabel(/Notes/)).toHaveValue('');
  await expect(form.getByLabel('Instrument', { exact: true })).toHaveValue(monitor.id);

  await h2s.fill('0');
  await co.fill('2');
  await form.getByRole('button', { name: 'Record gas test' }).tap();
  await expect.poll(() => saved).toBe(2);
  const api = await apiAs(TESTER);
  try {
    await expect
      .poll(async () => {
        const tests = await ok<{ items: { place: string; readings: { o2Pct: number; lelPct: number; h2sPpm: number; coPpm: number }; instrument: { id: string } | null }[] }>(api.get(`/api/permits/${own.id}/gas-tests?pageSize=10`));
        return tests.items.map(({ place, readings: r, instrument }) => ({ place, readings: { o2Pct: r.o2Pct, lelPct: r.lelPct, h2sPpm: r.h2sPpm, coPpm: r.coPpm }, instrument: instrument?.id })).sort((a, b) => a.place.localeCompare(b.place));
      })
      .toEqual([
        { place: 'inside_pipe_upstream', readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 }, instrument: monitor.id },
        { place: 'work_area', readings: { o2Pct: 20.8, lelPct: 1, h2sPpm: 0, coPpm: 2 }, instrument: monitor.id },
      ]);
  } finally {
    await api.close();
  }
});
