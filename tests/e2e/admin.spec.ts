import { expect, test } from '@playwright/test';
import { format, subDays } from 'date-fns';
import { noSideScroll, shot, signIn } from './helpers';

// The invitation journey crosses three browser pages and a mail worker: give it room on a busy machine.
test.describe.configure({ timeout: 180_000 });

const invitee = `ellis.marr.${Date.now().toString(36)}@fenwick-survey.example`;
const inviteePassword = 'slate-harbour-lantern-6';

test('the sign-in page', async ({ page }) => {
  await page.goto('/sign-in');
  await expect(page.getByRole('heading', { name: 'Sign in' })).toBeVisible();
  await expect(page.getByText('Demo accounts (password: holdpoint-demo)')).toBeVisible();
  await shot(page, 'sign-in');
});

test('when the tenant admin invites someone, then the mail arrives, the link opens the accept page, and the new person signs in and sees only what an auditor may', async ({ page, browser }) => {
  await signIn(page, 'admin@bramblecote.example');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'People', exact: true }).click();
  await expect(page.getByRole('heading', { name: 'People', level: 1 })).toBeVisible();

  const form = page.locator('form').filter({ has: page.getByRole('button', { name: 'Send invitation' }) });
  const email = form.getByLabel('E-mail', { exact: true });

  // A bad address and no organisation first: each error shows at its field and nothing is sent.
  await email.fill('ellis.marr-at-fenwick');
  await form.getByLabel('Role').selectOption({ label: 'Auditor' });
  await form.getByRole('button', { name: 'Send invitation' }).click();
  await expect(form.getByText('Enter a valid e-mail address.')).toBeVisible();
  await expect(email).toHaveAttribute('aria-invalid', 'true');
  await expect(form.getByText('Choose an organisation.')).toBeVisible();
  await expect(form.getByLabel('Organisation')).toHaveAttribute('aria-invalid', 'true');
  await expect(page.getByText(/Invitation sent/)).toHaveCount(0);

  await form.getByLabel('Organisation').selectOption({ label: 'Bramblecote Midstream (operator)' });
  await email.fill(invitee);
  await form.getByRole('button', { name: 'Send invitation' }).click();
  await expect(page.getByRole('status').filter({ hasText: `Invitation sent to ${invitee}.` })).toBeVisible();
  await expect(email).not.toHaveAttribute('aria-invalid', 'true');
  await expect(page.getByTestId('user-row').first()).toBeVisible();
  await expect(page.getByRole('status').filter({ hasText: 'Invitation sent' })).toHaveCount(0, { timeout: 8_000 });
  await shot(page, 'people');

  // The demo server's mail worker delivers to the in-process catcher shown on /dev/mail, where the
  // signed-in tenant admin sees the mail their tenant sent.
  const mailbox = await page.context().newPage();
  await expect(async () => {
    await mailbox.goto('/dev/mail');
    await expect(mailbox.locator('article').filter({ hasText: `To ${invitee}` })).toBeVisible({ timeout: 1_000 });
  }).toPass({ timeout: 20_000 });
  const mail = mailbox.locator('article').filter({ hasText: `To ${invitee}` });
  await expect(mail.getByRole('heading', { name: 'You are invited to Bramblecote Midstream on Holdpoint' })).toBeVisible();
  const href = await mail.getByRole('link', { name: /accept-invitation\?token=/ }).getAttribute('href');
  expect(href).toMatch(/\/accept-invitation\?token=[A-Za-z0-9_-]{20,}$/);

  // The invitee is someone else, in a browser of their own.
  const theirs = await browser.newContext();
  const them = await theirs.newPage();
  await them.goto(href!);
  await expect(them.getByRole('heading', { name: 'Accept your invitation' })).toBeVisible();
  await them.getByLabel('Your name').fill('Ellis Marr');
  await them.getByLabel('Password', { exact: true }).fill(inviteePassword);
  await them.getByRole('button', { name: 'Accept and continue' }).click();
  await expect(them.getByRole('status').filter({ hasText: 'You are in.' })).toBeVisible();

  // The link worked once; opened again it is refused.
  const again = await theirs.newPage();
  await again.goto(href!);
  await again.getByLabel('Your name').fill('Ellis Marr');
  await again.getByLabel('Password', { exact: true }).fill(inviteePassword);
  await again.getByRole('button', { name: 'Accept and continue' }).click();
  await expect(again.getByText(/not valid or has already been used/)).toBeVisible();
  await again.close();

  await them.getByRole('link', { name: 'Sign in' }).click();
  await signIn(them, invitee, inviteePassword);
  await expect(them.getByTestId('who')).toHaveText('Ellis Marr · Auditor');
  const nav = them.getByRole('navigation', { name: 'Main' });
  await expect(nav.getByRole('link', { name: 'Qualifications', exact: true })).toBeVisible();
  for (const hidden of ['People', 'Organisations']) await expect(nav.getByRole('link', { name: hidden, exact: true })).toHaveCount(0);
  await nav.getByRole('link', { name: 'Qualifications', exact: true }).click();
  await expect(them.getByTestId('qualification-row').first()).toBeVisible();
  await expect(them.getByRole('heading', { name: 'Record a qualification' })).toHaveCount(0);
  await them.goto('/admin/users');
  await expect(them.getByTestId('user-row').first()).toBeVisible();
  await expect(them.getByRole('heading', { name: 'Invite someone' })).toHaveCount(0);
  await expect(them.getByRole('combobox', { name: /^Role of / })).toHaveCount(0);
  await theirs.close();
  await mailbox.close();
});

test('when a qualification has expired or expires within 30 days, then its row is highlighted', async ({ page }) => {
  await signIn(page, 'admin@bramblecote.example');
  await page.goto('/admin/qualifications');
  await expect(page.getByRole('heading', { name: 'Qualifications', level: 1 })).toBeVisible();

  // Record one that ran out ten days ago.
  const today = new Date();
  await page.getByLabel('Person').selectOption({ label: 'Ana Lisgar' });
  await page.getByLabel('Qualification').selectOption({ label: 'Confined-space entry' });
  await page.getByLabel('Issued').fill(format(subDays(today, 740), 'yyyy-MM-dd'));
  await page.getByLabel('Expires').fill(format(subDays(today, 10), 'yyyy-MM-dd'));
  await page.getByRole('button', { name: 'Save' }).click();
  await expect(page.getByRole('status').filter({ hasText: 'Qualification recorded.' })).toBeVisible();

  const expired = page.getByTestId('qualification-row').filter({ hasText: 'Confined-space entry' }).filter({ hasText: 'Ana Lisgar' });
  await expect(expired).toContainText('Expired 10 days ago');
  await expect(expired).toHaveClass(/bg-danger-soft/);

  // From the demo data: Sam's gas tester certificate expires in 25 days.
  const soon = page.getByTestId('qualification-row').filter({ hasText: 'Sam Ferrand' }).filter({ hasText: 'Authorised gas tester' });
  await expect(soon).toContainText(/Expires in 2[45] days/);
  await expect(soon).toHaveClass(/bg-caution-soft/);

  const valid = page.getByTestId('qualification-row').filter({ hasText: 'Valid,' }).first();
  await expect(valid).not.toHaveClass(/bg-(danger|caution)-soft/);
  await expect(page.getByRole('status').filter({ hasText: 'Qualification recorded.' })).toHaveCount(0, { timeout: 8_000 });
  await shot(page, 'qualifications');
});

for (const size of [
  { name: 'tablet', width: 1024, height: 768 },
  { name: 'phone', width: 390, height: 844 },
]) {
  test(`on a ${size.name}, the people and qualifications pages fit the screen`, async ({ page }) => {
    await signIn(page, 'admin@bramblecote.example');
    await page.setViewportSize({ width: size.width, height: size.height });
    await page.goto('/admin/users');
    await expect(page.getByTestId('user-row').first()).toBeVisible();
    await noSideScroll(page);
    await page.goto('/admin/qualifications');
    await expect(page.getByTestId('qualification-row').first()).toBeVisible();
    await noSideScroll(page);
  });
}
