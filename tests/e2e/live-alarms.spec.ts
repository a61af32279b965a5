// Live status and alarms on every open screen (issue 18): the gas tester's phone on the permit page
// and the control room's screen follow the permit; a suspension reaches both as an alarm within 2 s,
// the state badge follows, the alarm stays until someone says they have seen it, and a phone that
// went without signal catches up on what it missed when it is back.
import { expect, test, type Browser, type BrowserContext, type Page } from '@playwright/test';
import { acceptedPermit, apiAs, bumpTestedMonitor, ok, takeLive, transition } from './api-helpers';
import { DEMO_PASSWORD, shot } from './helpers';

const phone = { viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true };
// Points of this spec's own on the Haskins Creek trunk, so no other spec's permit shares them.
const VALVE = 'HC-BV-355';
const VENT = 'HC-VT-356';

let permit: { id: string; number: string };

test.beforeAll(async () => {
  const admin = await apiAs('admin@bramblecote.example');
  try {
    const pipes = await ok<{ items: { id: string; code: string }[] }>(admin.get('/api/pipelines?q=BM-16&pageSize=50'));
    const pipelineId = pipes.items.find((p) => p.code === 'BM-16')!.id;
    await ok(admin.post('/api/isolation-points', { pipelineId, tagCode: VALVE, kind: 'block_valve', position: 35.5, valveType: 'ball', normalPosition: 'open', remotelyOperable: false }), 201);
    await ok(admin.post('/api/isolation-points', { pipelineId, tagCode: VENT, kind: 'vent', position: 35.6 }), 201);
  } finally {
    await admin.close();
  }
  permit = await acceptedPermit(`Live alarms: repack the stem of ${VALVE}`, [VALVE, VENT], 'BM-16');
  await takeLive(permit.id);
});

async function open(browser: Browser, email: string, options: Parameters<Browser['newContext']>[0]): Promise<{ context: BrowserContext; page: Page }> {
  const context = await browser.newContext(options);
  const page = await context.newPage();
  // The shared sign-in waits for the name in the header, which a phone keeps behind the menu.
  await page.goto('/sign-in');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByTestId('who')).toBeAttached();
  // The screen follows the permit once its stream answers (My work before it may already follow it too).
  const following = page.waitForResponse((r) => r.url().includes('/api/stream?') && r.url().includes(permit.id) && r.status() === 200);
  await page.goto(`/permits/${permit.id}`);
  await expect(page.getByTestId('permit-state').first()).toHaveText(/Live work/);
  await following;
  return { context, page };
}

test('when the control room suspends live work, then the gas tester’s phone and the control room’s screen show the alarm within 2 s; it stays until seen; a phone back from no signal catches up', async ({ browser }) => {
  const gasTester = await open(browser, 'tech@oxbow-repair.example', phone);
  const controlRoom = await open(browser, 'control@bramblecote.example', { viewport: { width: 1280, height: 800 } });
  const control = await apiAs('control@bramblecote.example');
  const tech = await apiAs('tech@oxbow-repair.example');
  try {
    const phoneScreen = gasTester.page;
    // Let both streams settle on the permit (their "ready") before the change.
    await phoneScreen.waitForTimeout(500);

    const sent = Date.now();
    await transition(control, permit.id, 'suspend', { reason: 'Pressure rising behind the upstream valve.' });
    const alarm = phoneScreen.getByRole('alert').filter({ hasText: `Permit ${permit.number} was suspended by the control room` });
    await expect(alarm).toBeVisible({ timeout: 2_000 });
    const shownAfter = Date.now() - sent;
    await expect(phoneScreen.getByTestId('permit-state').first()).toHaveText(/Suspended/, { timeout: 2_000 });
    console.log(`live alarms: suspension shown on the phone ${shownAfter} ms after the control room's request returned`);
    expect(shownAfter).toBeLessThan(2_000);
    await expect(alarm).toContainText('Stop work.');
    await expect(alarm).toContainText('Pressure rising behind the upstream valve.');
    // The time in the site's zone, with the zone named.
    await expect(alarm).toContainText(/at \d{1,2} \w{3}, \d{2}:\d{2} \S+ \([A-Za-z_]+\/[A-Za-z_]+\)/);
    await expect(controlRoom.page.getByRole('alert').filter({ hasText: `Permit ${permit.number} was suspended` })).toBeVisible({ timeout: 2_000 });

    // Full width, big enough for a gloved thumb, and inside the phone's screen.
    const box = (await alarm.boundingBox())!;
    expect(box.width).toBeGreaterThanOrEqual(389);
    const seenButton = alarm.getByRole('button', { name: 'I have seen this' });
    expect((await seenButton.boundingBox())!.height).toBeGreaterThanOrEqual(44);
    await shot(phoneScreen, 'live-alarm-phone');

    // A refetch (another section, back again) and a reload do not take it away…
    await phoneScreen.getByRole('navigation', { name: 'Permit sections' }).getByRole('link').nth(1).click();
    await phoneScreen.goto(`/permits/${permit.id}`);
    await expect(alarm).toBeVisible();
    await phoneScreen.reload();
    await expect(alarm).toBeVisible();
    // …only the person saying they have seen it does, on this device.
    await alarm.getByRole('button', { name: 'I have seen this' }).tap();
    await expect(alarm).toHaveCount(0);
    await phoneScreen.reload();
    await expect(phoneScreen.getByTestId('permit-state').first()).toHaveText(/Suspended/);
    await expect(alarm).toHaveCount(0);
    await expect(controlRoom.page.getByRole('alert').filter({ hasText: `Permit ${permit.number} was suspended` })).toBeVisible();

    // No signal: a failing gas test is recorded meanwhile (another tester's device). Back online, the phone catches up.
    await gasTester.context.setOffline(true);
    await expect(phoneScreen.getByTestId('connection-status')).toContainText('Offline since');
    const monitor = await bumpTestedMonitor();
    await ok(
      tech.post(`/api/permits/${permit.id}/gas-tests`, {
        instrumentId: monitor.id, place: 'work_area', testedAt: new Date().toISOString(), readings: { o2Pct: 20.9, lelPct: 14, h2sPpm: 0, coPpm: 1 },
      }),
      201,
    );
    await phoneScreen.waitForTimeout(1_000);
    await expect(phoneScreen.getByRole('alert').filter({ hasText: 'A gas test failed' })).toHaveCount(0);
    await gasTester.context.setOffline(false);
    const gasAlarm = phoneScreen.getByRole('alert').filter({ hasText: `Stop work. A gas test failed on permit ${permit.number}` });
    await expect(gasAlarm).toBeVisible({ timeout: 5_000 });
    await expect(gasAlarm).toContainText('Work area');
    await expect(gasAlarm).toHaveCount(1);
    await shot(phoneScreen, 'live-alarm-after-reconnect');
  } finally {
    await Promise.all([control.close(), tech.close(), gasTester.context.close(), controlRoom.context.close()]);
  }
});
