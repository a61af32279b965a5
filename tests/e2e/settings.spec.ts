import AxeBuilder from '@axe-core/playwright';
import { expect, test } from '@playwright/test';
import { apiAs, ok } from './api-helpers';
import { noSideScroll, signInOnPhone } from './helpers';

/*
 * The Settings page on a phone: the tenant admin changes the records address and the re-check of
 * long-term isolations, is told in the field when a time zone is not one, and is asked for a reason
 * before weakening a safety margin. The demo's settings are put back afterwards, since every spec of
 * the run shares the database.
 */

const phone = { viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true };

test.describe('settings', () => {
  let original: { recordsEmail: string | null; isolationRecheckHours: number; timeZone: string };

  test.beforeAll(async () => {
    const admin = await apiAs('admin@bramblecote.example');
    original = await ok(admin.get('/api/tenant/settings'));
    await admin.close();
  });

  test.afterAll(async () => {
    const admin = await apiAs('admin@bramblecote.example');
    await ok(admin.patch('/api/tenant/settings', { ...original, reason: 'The browser test puts the demo settings back.' }));
    await admin.close();
  });

  test('settings e2e: when the tenant admin changes the records address and the re-check interval on a phone, then they are saved; a bad zone and a weakened margin are stopped at the field', async ({ browser }) => {
    const context = await browser.newContext(phone);
    const page = await context.newPage();
    await signInOnPhone(page, 'admin@bramblecote.example');
    await page.getByRole('button', { name: 'Menu' }).click();
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Settings', exact: true }).click();
    await expect(page.getByRole('heading', { name: 'Settings' })).toBeVisible();

    const records = page.getByLabel('Records address for signed audit checkpoints');
    await expect(records).toHaveValue(original.recordsEmail ?? '');
    await records.fill('records-office@bramblecote.example');
    const recheck = page.getByLabel('Re-check long-term isolations every (hours)');
    await recheck.fill('72');
    // Tightening a margin needs no reason and shows no caution.
    await expect(page.getByText('This change weakens a safety margin:')).toHaveCount(0);
    await page.getByRole('button', { name: 'Save settings' }).click();
    await expect(page.getByText(/Settings saved: records address for signed audit checkpoints; re-check long-term isolations every\./)).toBeVisible();
    await page.reload();
    await expect(page.getByLabel('Records address for signed audit checkpoints')).toHaveValue('records-office@bramblecote.example');
    await expect(page.getByLabel('Re-check long-term isolations every (hours)')).toHaveValue('72');

    // A time zone that does not exist is named at its field; nothing is sent.
    const zone = page.getByLabel('Site time zone');
    await zone.fill('Mars/Olympus_Mons');
    await page.getByRole('button', { name: 'Save settings' }).click();
    await expect(page.getByText('This is not a time zone we know. Use its full name, such as America/Chicago or Europe/London.')).toBeVisible();
    await expect(zone).toHaveAttribute('aria-invalid', 'true');
    await expect(zone).toBeFocused();
    await zone.fill(original.timeZone);
    await expect(page.getByText(/Time at the site now: .* (CST|CDT|MST|MDT)\./)).toBeVisible();

    // Switching off the daily bump test weakens a margin: the caution says so and a reason is asked for.
    const grace = page.getByLabel('Grace before an overdue gas test suspends hot work (minutes)');
    await grace.fill('61');
    await page.getByLabel('Gas detectors need a bump test each site day').uncheck();
    await expect(page.getByText('This change weakens a safety margin:')).toBeVisible();
    await expect(page.getByText('gas detectors no longer need a bump test each site day')).toBeVisible();
    await page.getByRole('button', { name: 'Save settings' }).click();
    await expect(page.getByText('Enter a whole number of minutes from 0 to 60.')).toBeVisible();
    await grace.fill('0');
    await page.getByRole('button', { name: 'Save settings' }).click();
    await expect(page.getByText('Say why this change is needed: it weakens a safety margin.')).toBeVisible();
    await noSideScroll(page);

    const { violations } = await new AxeBuilder({ page }).analyze();
    const grave = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    console.log(`axe settings: ${grave.length} serious/critical, ${violations.length - grave.length} minor/moderate`);
    expect(grave.map((v) => `${v.id}: ${v.help}`)).toEqual([]);

    // Nothing of the refused attempt was stored.
    const admin = await apiAs('admin@bramblecote.example');
    expect(await ok(admin.get('/api/tenant/settings'))).toMatchObject({ recordsEmail: 'records-office@bramblecote.example', isolationRecheckHours: 72, requireDailyBumpTest: true, timeZone: original.timeZone });
    await admin.close();
    await context.close();
  });

  test('settings e2e: when someone other than the tenant admin signs in, then the Settings entry is not offered', async ({ browser }) => {
    const context = await browser.newContext(phone);
    const page = await context.newPage();
    await signInOnPhone(page, 'authoriser@bramblecote.example');
    await page.getByRole('button', { name: 'Menu' }).click();
    const nav = page.getByRole('navigation', { name: 'Main' });
    await expect(nav.getByRole('link', { name: 'Qualifications', exact: true })).toBeVisible();
    await expect(nav.getByRole('link', { name: 'Settings', exact: true })).toHaveCount(0);
    await context.close();
  });
});
