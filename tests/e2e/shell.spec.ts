import { expect, test } from '@playwright/test';
import { signIn } from './helpers';

test('the sign-in page shows the product name in Noto Sans, the font shipped with the app', async ({ page }) => {
  await page.goto('/');
  await expect(page).toHaveURL(/\/sign-in/);
  await expect(page.getByText('Holdpoint', { exact: true }).first()).toBeVisible();
  await page.evaluate(() => document.fonts.ready);
  const family = await page.locator('h1').evaluate((el) => getComputedStyle(el).fontFamily);
  expect(family).toContain('Noto Sans');
  const loaded = await page.evaluate(() => [...document.fonts].some((f) => f.family.includes('Noto Sans') && f.status === 'loaded'));
  expect(loaded).toBe(true);
});

test('when someone sends the sign-in form empty, then each field says what is wrong and takes the focus; fixing a field clears its message; a demo account fills both', async ({ page }) => {
  await page.goto('/sign-in');
  const email = page.getByLabel('E-mail');
  const password = page.getByLabel('Password', { exact: true });
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByText('Enter a valid e-mail address.')).toBeVisible();
  await expect(page.getByText('Password is required.')).toBeVisible();
  await expect(email).toHaveAttribute('aria-invalid', 'true');
  await expect(password).toHaveAttribute('aria-invalid', 'true');
  await expect(email).toBeFocused();

  await email.fill('  Auditor@Bramblecote.Example ');
  await expect(page.getByText('Enter a valid e-mail address.')).toHaveCount(0);
  await expect(email).not.toHaveAttribute('aria-invalid', 'true');
  await expect(page.getByText('Password is required.')).toBeVisible();

  await page.getByRole('button', { name: /control@bramblecote\.example/ }).click();
  await expect(email).toHaveValue('control@bramblecote.example');
  await expect(password).toHaveValue('holdpoint-demo');
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByTestId('who')).toBeVisible();
});

test('finding 15: when the sign-in page is opened with next=//host, then it stays on the sign-in page without an error and signing in leads home, not away', async ({ page, baseURL }) => {
  const errors: string[] = [];
  page.on('pageerror', (err) => errors.push(err.message));
  await page.goto('/sign-in?next=//evil.example/permits');
  await expect(page.getByRole('heading', { name: 'Sign in' })).toBeVisible();
  await page.getByLabel('E-mail').fill('auditor@bramblecote.example');
  await page.getByLabel('Password', { exact: true }).fill('holdpoint-demo');
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByTestId('who')).toBeVisible();
  expect(new URL(page.url()).origin).toBe(new URL(baseURL!).origin);
  expect(new URL(page.url()).pathname).toBe('/');
  // Signed in already, the same link leads home as well.
  await page.goto('/sign-in?next=/%5Cevil.example');
  await expect(page.getByTestId('who')).toBeVisible();
  expect(new URL(page.url()).origin).toBe(new URL(baseURL!).origin);
  expect(errors).toEqual([]);
});

test('an unknown address inside the app shows the not-found page', async ({ page }) => {
  await signIn(page, 'auditor@bramblecote.example');
  await page.goto('/no/such/page');
  await expect(page.getByRole('heading', { name: 'Not found' })).toBeVisible();
});

const expectations: Record<string, { sees: string[]; hidden: string[] }> = {
  'admin@bramblecote.example': { sees: ['People', 'Organisations', 'Qualifications', 'Reports'], hidden: [] },
  'authoriser@bramblecote.example': { sees: ['Qualifications', 'Reports'], hidden: ['People', 'Organisations'] },
  'control@bramblecote.example': { sees: ['My work'], hidden: ['People', 'Organisations', 'Qualifications', 'Reports'] },
  'lead@oxbow-repair.example': { sees: ['My work'], hidden: ['People', 'Organisations', 'Qualifications', 'Reports'] },
  'tech@oxbow-repair.example': { sees: ['My work'], hidden: ['People', 'Organisations', 'Qualifications', 'Reports'] },
  'auditor@bramblecote.example': { sees: ['Qualifications', 'Reports'], hidden: ['People', 'Organisations'] },
  'authoriser@harlowridge.example': { sees: ['Qualifications', 'Reports'], hidden: ['People', 'Organisations'] },
};

for (const [email, { sees, hidden }] of Object.entries(expectations)) {
  test(`${email} sees only the navigation their role allows`, async ({ page }) => {
    await signIn(page, email);
    const nav = page.getByRole('navigation', { name: 'Main' });
    for (const label of sees) await expect(nav.getByRole('link', { name: label, exact: true })).toBeVisible();
    for (const label of hidden) await expect(nav.getByRole('link', { name: label, exact: true })).toHaveCount(0);
  });
}

test('the tenant admin sees the invite form; the authoriser opening the people page gets no invite form', async ({ page }) => {
  await signIn(page, 'admin@bramblecote.example');
  await page.goto('/admin/users');
  await expect(page.getByRole('heading', { name: 'Invite someone' })).toBeVisible();
  await expect(page.getByTestId('user-row').first()).toBeVisible();
});
