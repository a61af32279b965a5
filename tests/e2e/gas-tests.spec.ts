import { expect, test } from '@playwright/test';
import { livePermit } from './api-helpers';
import { noSideScroll, openPermitSection, shot, signedInPage } from './helpers';

const TESTER = 'tech@oxbow-repair.example';
const CONTROL = 'control@bramblecote.example';
const AUTHORISER = 'authoriser@bramblecote.example';

let permit: { id: string; number: string };

test.beforeAll(async () => {
  test.setTimeout(120_000);
  permit = await livePermit('Repack the gland of CR-BV-046', ['CR-BV-046', 'CR-VT-047']);
});

test('when the gas tester records a failing reading on a live permit, then the permit page and the control-room board show it suspended without a reload', async ({ browser }) => {
  test.setTimeout(120_000);
  const control = await signedInPage(browser, CONTROL);
  await control.goto('/board');
  await expect(control.getByRole('heading', { name: 'Live board', level: 1 })).toBeVisible();
  await expect(control.getByTestId('live-status')).toHaveAttribute('data-status', 'live');
  const boardRow = control.locator(`[data-testid="board-row"][data-permit="${permit.number}"]`).first();
  await expect(boardRow.getByTestId('permit-state').first()).toHaveAttribute('data-state', 'live');

  const tester = await signedInPage(browser, TESTER);
  await tester.goto(`/permits/${permit.id}`);
  const badge = tester.getByTestId('permit-state').first();
  await expect(badge).toHaveAttribute('data-state', 'live');
  await openPermitSection(tester, 'Gas tests');
  const section = tester.getByTestId('gas-tests-section');
  // The caution once on the screen, not in every section.
  await expect(tester.getByText('Caution', { exact: true })).toHaveCount(1);
  await expect(section.getByTestId('gas-due-list').locator('[data-kind="gas_test"]')).toContainText(/due in|overdue by/);
  await expect(section.getByTestId('gas-test-row')).toHaveCount(1);

  // The out-of-date monitor is offered but cannot be chosen.
  const form = section.getByRole('form', { name: 'Record a gas test' });
  const instrument = form.getByLabel('Instrument', { exact: true });
  await expect(instrument.locator('option', { hasText: 'TQ4-00418' })).toBeDisabled();
  await instrument.selectOption({ label: 'Fenmark G4 four-gas monitor · FG4-20731' });
  await form.getByLabel('Where').selectOption({ label: 'Work area' });
  await form.getByLabel('Oxygen, O₂ (% vol)').fill('20.8');
  await form.getByLabel('Flammable gas (% LEL)').fill('12');
  await form.getByLabel('H₂S (ppm)').fill('0');
  await form.getByLabel('CO (ppm)').fill('2');
  // The verdict is worked out while typing, before anything is recorded.
  await expect(form.getByTestId('atmosphere-verdict')).toContainText('Fail');
  await expect(form.getByTestId('gas-lel')).toHaveAttribute('data-verdict', 'fail');
  await expect(form.getByText('A failing reading stops the work')).toBeVisible();
  await form.getByRole('button', { name: 'Record gas test' }).click();

  // No reload on either page: the tester's page from the answer, the board from the live stream.
  await expect(badge).toHaveAttribute('data-state', 'suspended');
  await expect(form.getByText('Holdpoint has suspended the permit.')).toBeVisible();
  await expect(section.getByTestId('gas-test-row')).toHaveCount(2);
  await expect(section.getByTestId('gas-test-row').first().getByTestId('gas-verdict')).toHaveText(/Fail/);
  await expect(boardRow.getByTestId('permit-state').first()).toHaveAttribute('data-state', 'suspended', { timeout: 5_000 });
  await expect(section.getByTestId('chart-lelPct')).toBeVisible();
  await expect(section.getByTestId('chart-lelPct').locator('svg desc')).toContainText('1 outside the limit');

  await section.scrollIntoViewIfNeeded();
  await shot(tester, 'gas-tests');

  // Tablet and phone: nothing forces the page sideways.
  for (const viewport of [{ width: 1024, height: 768 }, { width: 390, height: 844 }]) {
    await tester.setViewportSize(viewport);
    await expect(section.getByRole('button', { name: 'Record gas test' })).toBeVisible();
    await noSideScroll(tester);
  }
});

test('when the authoriser opens Instruments, then the monitor past its calibration is highlighted and a bump test can be recorded', async ({ browser }) => {
  const page = await signedInPage(browser, AUTHORISER);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Instruments', exact: true }).click();
  await expect(page.getByRole('heading', { name: 'Instruments', level: 1 })).toBeVisible();
  const overdue = page.getByTestId('instrument-row').filter({ hasText: 'TQ4-00418' });
  await expect(overdue.getByTestId('instrument-status')).toContainText('Not usable: Calibration overdue');
  const inDate = page.getByTestId('instrument-row').filter({ hasText: 'FG4-20731' });
  await inDate.getByRole('button', { name: 'Record bump test now' }).click();
  await expect(page.getByText('Bump test recorded for FG4-20731.')).toBeVisible();
  await expect(inDate.getByTestId('instrument-status')).toContainText('✓ Usable');
  await expect(inDate.getByTestId('instrument-status')).toContainText('bump-tested today');
  await page.setViewportSize({ width: 390, height: 844 });
  await noSideScroll(page);
});
