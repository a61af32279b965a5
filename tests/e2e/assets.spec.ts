import { expect, test } from '@playwright/test';
import { shot, signIn } from './helpers';

const CEDAR_RUN_VALVES = [0, 4.6, 9.8, 14.9, 19.7, 25.2, 30.4];

test('the Cedar Run lateral is drawn to scale with its valves in position order, and a section can be zoomed', async ({ page }) => {
  await signIn(page, 'lead@oxbow-repair.example');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Pipelines', exact: true }).click();
  await page.getByRole('link', { name: /BM-10 Cedar Run Lateral/ }).click();
  await expect(page.getByRole('heading', { name: 'BM-10 Cedar Run Lateral' })).toBeVisible();

  const strip = page.getByTestId('schematic-strip');
  const valves = strip.locator('[data-testid="schematic-point"][data-kind="block_valve"]');
  await expect(valves).toHaveCount(CEDAR_RUN_VALVES.length);
  const positions = (await valves.evaluateAll((els) => els.map((el) => el.getAttribute('data-position')))).map(Number);
  expect(positions).toEqual(CEDAR_RUN_VALVES);
  await expect(strip.locator('[data-tag="CR-BV-149"] title')).toHaveText(/Block valve CR-BV-149 at MP 14\.9/);

  // Drawn to scale: each valve's x grows in step with its milepost.
  const xs = await valves.evaluateAll((els) => els.map((el) => (el.querySelector('g[transform]') as SVGGElement).transform.baseVal.getItem(0).matrix.e));
  const perMile = (xs[6] - xs[0]) / 30.4;
  xs.forEach((x, i) => expect(Math.abs(x - xs[0] - CEDAR_RUN_VALVES[i] * perMile)).toBeLessThan(1));

  await expect(strip.locator('[data-testid="schematic-site"]')).toHaveCount(3);
  await page.setViewportSize({ width: 1280, height: 900 });
  await shot(page, 'pipeline-strip');

  // Zoom to the section around MP 17.3: only the two valves either side remain, with their vents and drains.
  await page.getByLabel('From (MP)').fill('14.5');
  await page.getByLabel('To (MP)').fill('20');
  await page.getByRole('button', { name: 'Show', exact: true }).click();
  await expect(valves).toHaveCount(2);
  expect(await valves.evaluateAll((els) => els.map((el) => el.getAttribute('data-tag')))).toEqual(['CR-BV-149', 'CR-BV-197']);
  await expect(strip.locator('[data-kind="vent"]')).toHaveCount(2);
  await expect(strip.locator('[data-kind="drain"]')).toHaveCount(2);
  await page.getByRole('button', { name: 'Whole line' }).click();
  await expect(valves).toHaveCount(7);
});

test('on a phone the strip fits the screen without sideways scrolling', async ({ page }) => {
  await signIn(page, 'tech@oxbow-repair.example');
  await page.setViewportSize({ width: 390, height: 844 });
  await page.goto('/pipelines');
  await page.getByRole('link', { name: /BM-10 Cedar Run Lateral/ }).click();
  const strip = page.getByTestId('schematic-strip');
  await expect(strip.locator('[data-kind="block_valve"]')).toHaveCount(7);
  const box = await strip.boundingBox();
  expect(box!.width).toBeLessThanOrEqual(390);
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  // Labels keep a readable size: the viewBox follows the box, so 11.5 px type stays 11.5 px.
  const label = strip.locator('[data-tag="CR-BV-149"] text').first();
  const height = (await label.boundingBox())!.height;
  expect(height).toBeGreaterThan(10);
});

test('an authoriser adds a lock and marks it lost; the state filter finds it', async ({ page }) => {
  await signIn(page, 'authoriser@bramblecote.example');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Locks & tags' }).click();
  await expect(page.getByRole('heading', { name: 'Locks and tags' })).toBeVisible();
  await page.getByRole('button', { name: 'Add a lock' }).click();
  await page.getByLabel('Lock number').fill('L-077');
  await page.getByRole('button', { name: 'Add lock' }).click();
  await expect(page.getByText('Lock L-077 saved.')).toBeVisible();
  await page.getByLabel('Search number').fill('L-077');
  await page.getByRole('button', { name: 'Change L-077' }).click();
  await page.getByLabel('State').first().selectOption('lost');
  await page.getByRole('button', { name: 'Save', exact: true }).click();
  await page.getByLabel('Search number').fill('');
  await page.getByRole('combobox', { name: 'State' }).last().selectOption('lost');
  await expect(page.getByTestId('inventory-row')).toHaveCount(1);
  await expect(page.getByTestId('inventory-row')).toContainText('L-077');
});
