import { expect, test, type Page } from '@playwright/test';
import { BENTONITE_WEIGH_NOTE, MUD_PLUG_CAUTION, SMALL_BORE_PLUG_ADVICE } from '../../shared/calc';
import { shot, signIn } from './helpers';

async function openCalculator(page: Page, email = 'tech@oxbow-repair.example') {
  await signIn(page, email);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Calculator', exact: true }).click();
  await expect(page.getByRole('heading', { name: 'Calculator', level: 1 })).toBeVisible();
}

const noSideScroll = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth);

test('when a technician enters a 10-inch diameter and 12 % LEL, then the plug figures with the caution show and the atmosphere fails', async ({ page }) => {
  await openCalculator(page);
  await page.getByLabel('Nominal diameter (in)').fill('10');

  // D³/16 = 62.5 lb of paste, ± 10 %, half of it water at the default 50/50 mix, plug 1.5 × D,
  // ceil(D³/12) = 84 balls: common practice, no published source.
  await expect(page.getByTestId('mud-total')).toHaveText('62.5 lb');
  await expect(page.getByTestId('plug-basis')).toHaveText('nominal 10 in');
  await expect(page.getByTestId('mud-range')).toHaveText('56.25–68.75 lb');
  await expect(page.getByTestId('mud-bentonite')).toHaveText('31.25 lb');
  // 31.25 lb of water at 8.33 lb/US gal (the figure of mud-weight formulas).
  await expect(page.getByTestId('mud-water')).toContainText('31.25 lb');
  await expect(page.getByTestId('mud-water')).toContainText('3.75 US gal');
  await expect(page.getByTestId('mud-length')).toHaveText('15 in');
  await expect(page.getByTestId('mud-balls')).toHaveText('84');
  await expect(page.getByTestId('mud-plug-caution')).toHaveText(MUD_PLUG_CAUTION);
  // Finding 17: 10 in lies within the 6–16 in the rule was tried on, so no size caution; the bore is not known from a nominal size.
  await expect(page.getByTestId('plug-size-caution')).toHaveCount(0);
  await expect(page.getByTestId('paste-by-nominal')).toHaveText('62.5 lb');
  await expect(page.getByTestId('paste-by-bore')).toContainText('Not known');
  await expect(page.getByTestId('bentonite-weigh-note')).toContainText(BENTONITE_WEIGH_NOTE);

  // OSHA 29 CFR 1910.146(b): flammable gas in excess of 10 % of its LFL is hazardous.
  await page.getByLabel('Flammable gas (% LEL)').fill('12');
  const lel = page.getByTestId('gas-lel');
  await expect(lel).toHaveAttribute('data-verdict', 'fail');
  await expect(lel).toContainText('Fail');
  await expect(lel).toContainText('1910.146');
  await expect(page.getByTestId('atmosphere-verdict')).toContainText('Fail');
  await shot(page, 'calculator');
});

test('when the size is given as NPS 10 Sch 40, then the plug is worked from the 10.020-in bore and says so', async ({ page }) => {
  await openCalculator(page);
  await page.getByLabel('NPS and schedule').check();
  await page.getByLabel('Schedule', { exact: true }).selectOption('40');
  await page.getByLabel('Nominal pipe size (NPS)').selectOption('10');
  // ASME B36.10M: NPS 10 Sch 40 OD 10.750 in, wall 0.365 in → ID 10.020 in; 10.02³/16 = 62.88 lb.
  await expect(page.getByTestId('plug-basis')).toHaveText('inside diameter 10.020 in (NPS 10 Sch 40, ASME B36.10M)');
  await expect(page.getByTestId('mud-total')).toHaveText('62.88 lb');
  // Finding 17: D³/16 takes the nominal size; the paste for the nominal 10 in and for the 10.020-in bore side by side.
  await expect(page.getByTestId('paste-by-nominal')).toHaveText('62.5 lb');
  await expect(page.getByTestId('paste-by-bore')).toHaveText('62.88 lb');
  await expect(page.getByText('D³/16 takes D as the nominal pipe size in inches')).toBeVisible();

  // The line fill takes that bore: 10.02²/1029.4 bbl/ft × 1,000 ft = 97.53 bbl (field rule ID²/1029.4).
  await page.getByRole('button', { name: /Use the inside diameter 10\.020 in/ }).click();
  await page.getByLabel('Length of line').fill('1000');
  await expect(page.getByTestId('fill-bbl')).toHaveText('97.53 bbl');
});

test('finding 17: when a 2-in pipe is sized as NPS 2 XXS, then the 1.503-in bore is used, no 3-in balls are offered and the size caution shows', async ({ page }) => {
  await openCalculator(page);
  await page.getByLabel('NPS and schedule').check();
  await page.getByLabel('Schedule', { exact: true }).selectOption('XXS');
  await page.getByLabel('Nominal pipe size (NPS)').selectOption('2');
  // ASME B36.10M: NPS 2 XXS OD 2.375 in, wall 0.436 in → bore 1.503 in.
  await expect(page.getByTestId('plug-basis')).toHaveText('inside diameter 1.503 in (NPS 2 XXS, ASME B36.10M)');
  // Under about 4 in of bore no 3-in balls (common practice): smaller balls or paste packed by hand.
  await expect(page.getByTestId('mud-balls')).toHaveText('None: bore too small');
  await expect(page.getByTestId('plug-small-bore')).toHaveText(SMALL_BORE_PLUG_ADVICE);
  // D³/16 was tried on 6, 10 and 16 in pipe (common practice, no published source): 2 in is outside.
  await expect(page.getByTestId('plug-size-caution')).toContainText('tried on 6, 10 and 16 in pipe');
  // 2³/16 = 0.5 lb by nominal size; 1.503³/16 = 0.21 lb by bore.
  await expect(page.getByTestId('paste-by-nominal')).toHaveText('0.5 lb');
  await expect(page.getByTestId('paste-by-bore')).toHaveText('0.21 lb');
});

test('when NPS 22 is asked in Sch 40, then the server refusal shows beside the schedule (ASME B36.10M lists no Sch 40 for NPS 22)', async ({ page }) => {
  await openCalculator(page);
  await page.getByLabel('NPS and schedule').check();
  await page.getByLabel('Nominal pipe size (NPS)').selectOption('22');
  await expect(page.getByTestId('mud-total')).toBeVisible();
  await page.getByLabel('Schedule', { exact: true }).selectOption('40');
  await expect(page.getByLabel('Schedule', { exact: true })).toHaveAccessibleDescription(/not listed for NPS 22/);
  await expect(page.getByTestId('mud-total')).toHaveCount(0);
});

test('when the diameter typed is negative or the water share is 0.7, then each field says what is wrong', async ({ page }) => {
  await openCalculator(page);
  await page.getByLabel('Nominal diameter (in)').fill('-5');
  await expect(page.getByLabel('Nominal diameter (in)')).toHaveAccessibleDescription(/must be a number greater than 0/);
  await page.getByLabel('Mix, water to bentonite by weight').selectOption('custom');
  await page.getByLabel('Water share (0.50–0.60)').fill('0.7');
  await expect(page.getByLabel('Water share (0.50–0.60)')).toHaveAccessibleDescription(/50\/50 to 60\/40 water to bentonite by weight/);
  await expect(page.getByTestId('mud-total')).toHaveCount(0);
});

test('when the tenant works in kilometres, then the plug is shown in kilograms, litres and millimetres', async ({ page }) => {
  await openCalculator(page, 'authoriser@harlowridge.example');
  await page.getByLabel('Nominal diameter (in)').fill('10');
  // 62.5 lb × 0.45359237 kg/lb = 28.35 kg; 3.7515 US gal × 3.785411784 L = 14.2 L; 15 in × 25.4 = 381 mm.
  await expect(page.getByTestId('mud-total')).toHaveText('28.35 kg');
  await expect(page.getByTestId('mud-water')).toContainText('14.17 kg');
  await expect(page.getByTestId('mud-water')).toContainText('14.2 L');
  await expect(page.getByTestId('mud-length')).toHaveText('381 mm');
  await expect(page.getByTestId('paste-by-nominal')).toHaveText('28.35 kg');
});

// The register is another feature; its answers are stood in for here so these tests hold whatever the demo data holds.
test('when the pipeline register is not there, then the picker says so and a typed size still works', async ({ page }) => {
  await page.route('**/api/pipelines?*', (route) =>
    route.fulfill({ status: 404, contentType: 'application/json', body: JSON.stringify({ error: { code: 'not_found', message: 'There is no such API route.', details: [] } }) }),
  );
  await openCalculator(page);
  await page.getByLabel('Pipeline in the register').check();
  await expect(page.getByText('No pipelines in the register yet')).toBeVisible();
  await page.getByLabel('Nominal size').check();
  await page.getByLabel('Nominal diameter (in)').fill('10');
  await expect(page.getByTestId('mud-total')).toHaveText('62.5 lb');
});

test('when a pipeline is picked from the register, then its recorded inside diameter is used and named', async ({ page }) => {
  const line = { id: '6f1c1c8e-0000-4000-8000-000000000001', code: 'QX-12', name: 'Quarry Cross Lateral', nps: 12, schedule: 'STD', insideDiameterIn: 12 };
  await page.route('**/api/pipelines?*', (route) => route.fulfill({ status: 200, contentType: 'application/json', body: JSON.stringify({ items: [line], total: 1, page: 1, pageSize: 200 }) }));
  await openCalculator(page);
  await page.getByLabel('Pipeline in the register').check();
  await page.getByLabel('Pipeline', { exact: true }).selectOption(line.id);
  // ASME B36.10M: NPS 12 STD is 12.750 in OD with a 0.375-in wall, so a 12.000-in bore; 12³/16 = 108 lb.
  await expect(page.getByTestId('plug-basis')).toHaveText('inside diameter 12.000 in, from the register (QX-12 · Quarry Cross Lateral)');
  await expect(page.getByTestId('mud-total')).toHaveText('108 lb');
});

for (const viewport of [
  { width: 390, height: 844 },
  { width: 1024, height: 768 },
]) {
  test(`when the calculator is filled in on a ${viewport.width}-px-wide screen, then the page does not scroll sideways`, async ({ page }) => {
    // Sign in at the default size: on a phone the signed-in name sits in the folded menu.
    await signIn(page, 'tech@oxbow-repair.example');
    await page.setViewportSize(viewport);
    await page.goto('/calculator');
    await page.getByLabel('Nominal diameter (in)').fill('36');
    await expect(page.getByTestId('mud-total')).toBeVisible();
    await page.getByLabel('Flammable gas (% LEL)').fill('12');
    await page.getByLabel('CO (ppm)').fill('50');
    await expect(page.getByTestId('atmosphere-readout')).toBeVisible();
    expect(await noSideScroll(page)).toBeLessThanOrEqual(viewport.width);
    await page.getByLabel('NPS and schedule').check();
    await page.getByLabel('Nominal pipe size (NPS)').selectOption('36');
    await expect(page.getByTestId('plug-basis')).toContainText('NPS 36');
    expect(await noSideScroll(page)).toBeLessThanOrEqual(viewport.width);
    const small = await page.locator('main input, main select, main button').evaluateAll((els) =>
      els.filter((el) => el.getBoundingClientRect().height < 44 && (el as HTMLInputElement).type !== 'radio' && (el as HTMLInputElement).type !== 'checkbox').length,
    );
    expect(small).toBe(0);
  });
}
