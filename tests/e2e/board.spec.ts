import { expect, test } from '@playwright/test';
import { acceptedPermit } from './api-helpers';
import { noSideScroll, openPermitSection, shot, signedInPage } from './helpers';

const TECH = 'tech@oxbow-repair.example';
const CONTROL = 'control@bramblecote.example';

let permit: { id: string; number: string };

test.beforeAll(async () => {
  permit = await acceptedPermit('Repack the stem of CR-BV-252', ['CR-BV-252']);
});

test('when the technician applies a lock on an accepted permit, then the control room board shows it within 2 s without a reload', async ({ browser }) => {
  test.setTimeout(120_000);
  const control = await signedInPage(browser, CONTROL);
  await control.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Live board', exact: true }).click();
  await expect(control.getByRole('heading', { name: 'Live board', level: 1 })).toBeVisible();
  await expect(control.getByTestId('live-status')).toHaveAttribute('data-status', 'live');
  const row = control.locator(`[data-testid="board-row"][data-permit="${permit.number}"]`);
  await expect(row).toHaveCount(0);

  const tech = await signedInPage(browser, TECH);
  await tech.goto(`/permits/${permit.id}`);
  await openPermitSection(tech, 'Isolation plan');
  const step = tech.getByTestId('isolation-step').filter({ hasText: 'CR-BV-252' });
  await expect(step).toHaveAttribute('data-status', 'planned');
  await step.getByRole('button', { name: 'Apply', exact: true }).click();
  const dialog = tech.getByRole('dialog');
  await expect(dialog).toBeVisible();
  await expect(dialog).toHaveAttribute('aria-modal', 'true');

  // Nothing chosen yet: the lock and tag are asked for at their fields.
  await dialog.getByRole('checkbox').check();
  await dialog.getByRole('button', { name: 'Record as applied' }).click();
  await expect(dialog.getByText('Choose the lock you put on.')).toBeVisible();
  await expect(dialog.getByLabel('Lock', { exact: true })).toHaveAttribute('aria-invalid', 'true');

  const lockSelect = dialog.getByLabel('Lock', { exact: true });
  const lockNumber = (await lockSelect.locator('option').nth(1).textContent())!.trim();
  await lockSelect.selectOption({ index: 1 });
  await dialog.getByLabel('Danger tag', { exact: true }).selectOption({ index: 1 });
  await dialog.getByRole('button', { name: 'Record as applied' }).click();
  await expect(dialog).toBeHidden();
  await expect(step).toHaveAttribute('data-status', 'applied');

  // The control room's page was not touched: the change arrives over the live stream.
  await expect(row).toBeVisible({ timeout: 2_000 });
  await expect(row).toHaveAttribute('data-label', 'CR-BV-252');
  await expect(row).toHaveAttribute('data-unacknowledged', 'true');
  await expect(row.getByTestId('board-lock')).toContainText(lockNumber);
  await expect(row.getByText('Not verified yet')).toBeVisible();
  await expect(control.getByTestId('board-pipeline').filter({ hasText: 'BM-10 Cedar Run Lateral' }).getByTestId('overlay-isolated').first()).toBeAttached();
  await control.setViewportSize({ width: 1280, height: 900 });
  await shot(control, 'board');

  // The control room acknowledges it from the board; the caution styling goes.
  await row.getByRole('button', { name: `Acknowledge CR-BV-252 on ${permit.number}` }).click();
  await control.getByRole('dialog').getByRole('button', { name: 'Acknowledge', exact: true }).click();
  await expect(row).not.toHaveAttribute('data-unacknowledged', 'true');
  await expect(row).toContainText('Acknowledged');

  // Tablet and phone: no sideways page scrolling.
  for (const size of [{ width: 1024, height: 768 }, { width: 390, height: 844 }]) {
    await control.setViewportSize(size);
    await noSideScroll(control);
  }
  await tech.setViewportSize({ width: 390, height: 844 });
  await noSideScroll(tech);
});
