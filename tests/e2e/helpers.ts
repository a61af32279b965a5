import { expect, type Browser, type Locator, type Page } from '@playwright/test';

export const DEMO_PASSWORD = 'holdpoint-demo';

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByTestId('who')).toBeVisible();
}

/** Signing in on a phone: the header's name sits behind the menu there, so the menu button tells the shell is open. */
export async function signInOnPhone(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('button', { name: 'Menu' })).toBeVisible();
}

/** Screenshots refresh the committed ones in docs/ only when asked (`SCREENSHOTS=docs`); otherwise they land in .tmp/. */
const shotDir = process.env.SCREENSHOTS === 'docs' ? 'docs/screenshots' : '.tmp/screenshots';

export async function shot(page: Page, name: string) {
  await page.screenshot({ path: `${shotDir}/${name}.png`, fullPage: true });
}

/** The page does not scroll sideways (field use on tablets and phones). */
export async function noSideScroll(page: Page) {
  const { scroll, width } = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, width: window.innerWidth }));
  expect(scroll, 'no horizontal page scrolling').toBeLessThanOrEqual(width);
}

/** Each person in a browser context of their own, as on separate machines. */
export async function signedInPage(browser: Browser, email: string, viewport = { width: 1280, height: 800 }) {
  const context = await browser.newContext({ viewport });
  const page = await context.newPage();
  await signIn(page, email);
  return page;
}

/** A screenshot for the user guide: what is on the screen (not the whole page), with `target` scrolled into view. */
export async function guideShot(page: Page, name: string, target?: Locator) {
  // A live screen may redraw the row between finding it and scrolling to it: find it again and retry.
  for (let attempt = 1; target; attempt++) {
    try {
      await target.scrollIntoViewIfNeeded({ timeout: 5_000 });
      break;
    } catch (err) {
      if (attempt >= 5) throw err;
      await page.waitForTimeout(300);
    }
  }
  await page.screenshot({ path: `${shotDir}/guide-${name}.png` });
}

/**
 * A virtual list (the live board) keeps only the rows near the screen in the page, so a row further down is
 * not found until the page is scrolled to it: scroll from the top, most of a screen at a time, as a person
 * would, until `row` is drawn.
 */
export async function scrollUntilDrawn(page: Page, row: Locator, timeout = 20_000) {
  await page.evaluate(() => window.scrollTo(0, 0));
  await expect(async () => {
    if ((await row.count()) === 0) await page.evaluate(() => window.scrollBy(0, Math.round(window.innerHeight * 0.75)));
    await expect(row).toHaveCount(1, { timeout: 500 });
  }).toPass({ timeout });
}

/** The wall-clock time in a time zone, as a datetime-local field takes it (yyyy-MM-ddTHH:mm). */
export function wallTime(at: Date, timeZone: string) {
  const parts = Object.fromEntries(
    new Intl.DateTimeFormat('en-GB', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23' })
      .formatToParts(at)
      .map((p) => [p.type, p.value]),
  );
  return `${parts.year}-${parts.month}-${parts.day}T${parts.hour}:${parts.minute}`;
}

/** Opens a permit action from the "What you can do now" list, lets `fill` complete its dialog, and confirms it. */
export async function takeAction(page: Page, action: string, fill?: (dialog: Locator) => Promise<void>) {
  await page.getByTestId('permit-state').first().waitFor();
  // The actions are on the permit's summary; from one of its sections, go back to it first.
  const summary = page.getByRole('navigation', { name: 'Permit sections' }).getByRole('link', { name: 'Summary', exact: true });
  if ((await summary.count()) && (await summary.getAttribute('aria-current')) !== 'page') await openPermitSection(page, 'Summary');
  await page.getByRole('button', { name: action, exact: true }).click();
  const dialog = page.getByRole('dialog');
  await expect(dialog).toBeVisible();
  if (fill) await fill(dialog);
  await dialog.getByRole('button', { name: new RegExp(`^(Sign: )?${action.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}$`) }).click();
  await expect(dialog).toHaveCount(0);
}

/** Fills a signing dialog: the password again and the signer's name as shown. */
export const signAs = (name: string, password = DEMO_PASSWORD) => async (dialog: Locator) => {
  await dialog.getByLabel('Your password').fill(password);
  await dialog.getByLabel(`Type your name as it appears: ${name}`).fill(name);
};

/**
 * The mail `to` received with this subject, from the development mailbox the e2e server runs, read
 * by `to` signed in (the mailbox shows each person their own mail; the outbox worker delivers within
 * a few seconds, so the page is read again until it is there).
 */
export async function mailTo(browser: Browser, to: string, subject: string | RegExp) {
  const mailbox = await signedInPage(browser, to);
  const mail = mailbox.locator('article').filter({ hasText: `To ${to}` }).filter({ has: mailbox.getByRole('heading', { name: subject }) });
  await expect(async () => {
    await mailbox.goto('/dev/mail');
    await expect(mail.first()).toBeVisible({ timeout: 1_000 });
  }).toPass({ timeout: 20_000 });
  const text = await mail.first().innerText();
  await mailbox.context().close();
  return text;
}

/** Opens one section of the permit page (its summary shows none of them): the link in the permit's section bar. */
export async function openPermitSection(page: Page, name: string) {
  const link = page.getByRole('navigation', { name: 'Permit sections' }).getByRole('link', { name, exact: true });
  await link.click();
  await expect(link).toHaveAttribute('aria-current', 'page');
}
