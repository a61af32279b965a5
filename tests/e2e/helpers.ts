import { expect, type Page } from '@playwright/test';

export const DEMO_PASSWORD = 'holdpoint-demo';

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByTestId('who')).toBeVisible();
}

export async function shot(page: Page, name: string) {
  await page.screenshot({ path: `docs/screenshots/${name}.png`, fullPage: true });
}
