// Issue 18, labels in the field: a technician on a phone picks the lock being applied by scanning its
// label with the camera, a scanned label's address opens the lock's point and permit, and without
// camera permission the scanner says so in words and takes the number typed instead.
// The camera is Chromium's fake one, playing a picture of the label's QR code made here.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { expect, test, type Browser } from '@playwright/test';
import { labelAddress } from '@shared/assets/label-address';
import { qrImage, y4mVideo } from '../fixtures/qr-image';
import { acceptedPermit, apiAs, ok } from './api-helpers';
import { DEMO_PASSWORD, noSideScroll, shot } from './helpers';

const LOCK = 'E2E-LBL-7';
const TAG = 'E2E-TAG-7';
const POINT = 'HC-BV-427';
const TECH = 'tech@oxbow-repair.example';
const phone = { viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true };

// The browser starts with this video as its camera, so it is written before any test asks for a page.
const camera = join(mkdtempSync(join(tmpdir(), 'holdpoint-camera-')), 'lock-label.y4m');
writeFileSync(camera, y4mVideo(qrImage(labelAddress(process.env.E2E_BASE_URL ?? 'http://127.0.0.1', 'lock', LOCK), 8, { width: 640, height: 480 })));

test.use({
  launchOptions: {
    executablePath: '/usr/bin/chromium',
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-dev-shm-usage', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic',
      '--use-fake-device-for-media-stream', `--use-file-for-fake-video-capture=${camera}`,
    ],
  },
});

let permit: { id: string; number: string };

test.beforeAll(async () => {
  const admin = await apiAs('admin@bramblecote.example');
  try {
    // A second worker (after a failure) finds them made already.
    for (const [path, number] of [['/api/locks', LOCK], ['/api/tags', TAG]]) expect([201, 409]).toContain((await admin.post(path, { number })).status());
  } finally {
    await admin.close();
  }
  permit = await acceptedPermit(`Labels: repack the gland of ${POINT}`, [POINT], 'BM-16');
});

async function phonePage(browser: Browser, withCamera: boolean) {
  const context = await browser.newContext(phone);
  if (withCamera) await context.grantPermissions(['camera'], { origin: process.env.E2E_BASE_URL });
  const page = await context.newPage();
  // On a phone the name in the header sits behind the menu: the menu button tells the sign-in worked.
  await page.goto('/sign-in');
  await page.getByLabel('E-mail').fill(TECH);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('button', { name: 'Menu' })).toBeVisible();
  return page;
}

test('issue 18: when the technician scans the lock label on the apply screen, then that lock is chosen, and its scanned address opens its point and permit', async ({ browser }) => {
  const page = await phonePage(browser, true);
  const tech = await apiAs(TECH);
  const plan = await ok<{ items: { id: string; label: string }[] }>(tech.get(`/api/permits/${permit.id}/isolations`));
  await tech.close();
  const step = plan.items.find((s) => s.label === POINT)!;

  await page.goto(`/permits/${permit.id}/steps/${step.id}/apply`);
  const apply = page.getByTestId('apply-form');
  await apply.getByRole('button', { name: "Scan the lock's label" }).tap();
  await expect(page.getByTestId('qr-scanner')).toBeVisible();
  // The fake camera shows the label: the scanner closes by itself and the lock is chosen.
  await expect(apply.getByText(`Lock ${LOCK} chosen.`)).toBeVisible({ timeout: 20_000 });
  await expect(page.getByTestId('qr-scanner')).toHaveCount(0);
  const lock = apply.getByLabel('Lock', { exact: true });
  await expect(lock.locator('option:checked')).toHaveText(LOCK);
  await apply.getByLabel('Danger tag', { exact: true }).selectOption({ label: TAG });
  await apply.getByRole('checkbox').check();
  await apply.getByRole('button', { name: 'Record as applied' }).tap();
  await expect(page).not.toHaveURL(/\/apply$/);

  // The label's address, as the phone's own camera app would open it.
  await page.goto(`/scan/lock/${LOCK}`);
  const result = page.getByTestId('scan-result');
  await expect(result.getByTestId('scan-number')).toHaveText(LOCK);
  await expect(result.getByTestId('scan-point')).toHaveText(POINT);
  await expect(result.getByTestId('scan-permit')).toContainText(permit.number);
  await expect(result.getByRole('link', { name: 'Verify this isolation' })).toHaveAttribute('href', `/permits/${permit.id}/steps/${step.id}/verify`);
  await noSideScroll(page);
  await shot(page, 'labels-scan-landing');

  // The scanner on its own page reads the same label and lands on the same answer.
  await page.goto('/scan');
  await page.getByRole('button', { name: 'Scan a lock or tag label' }).tap();
  await expect(page).toHaveURL(new RegExp(`/scan/lock/${LOCK}$`), { timeout: 20_000 });
  await expect(page.getByTestId('scan-point')).toHaveText(POINT);
  await page.getByRole('link', { name: `Open permit ${permit.number}` }).tap();
  await expect(page).toHaveURL(new RegExp(`/permits/${permit.id}$`));
  await page.context().close();
});

test('issue 18: when the camera may not be used, then the scanner says so in words and the typed number opens the lock', async ({ browser }) => {
  const page = await phonePage(browser, false);
  await page.goto('/scan');
  await page.getByRole('button', { name: 'Scan a lock or tag label' }).tap();
  const scanner = page.getByTestId('qr-scanner');
  await expect(scanner.getByRole('alert')).toContainText('Holdpoint is not allowed to use the camera');
  await scanner.getByLabel('Number on the lock or tag').fill(LOCK.toLowerCase());
  await scanner.getByRole('button', { name: 'Use this number' }).tap();
  await expect(page).toHaveURL(new RegExp(`/scan/lock/${LOCK}$`));
  await expect(page.getByTestId('scan-number')).toHaveText(LOCK);
  await page.context().close();
});
