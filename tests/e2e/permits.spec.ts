import { readFile } from 'node:fs/promises';
import { expect, test, type Browser, type Page } from '@playwright/test';
import { addDays, format } from 'date-fns';
import { DEMO_PASSWORD, noSideScroll, openPermitSection, shot, signedInPage, signIn } from './helpers';
import { apiAs, ok, transition } from './api-helpers';

const LEAD = 'lead@oxbow-repair.example';
const AUTHORISER = 'authoriser@bramblecote.example';
const ADMIN = 'admin@bramblecote.example';
const LINE = 'BM-10 Cedar Run Lateral';

/** The demo seed has the Cedar Run lateral; a database seeded without it gets it through the API, as an admin would. */
async function ensureDemoLine(browser: Browser) {
  const context = await browser.newContext();
  const page = await context.newPage();
  await signIn(page, ADMIN);
  const list = await page.request.get('/api/pipelines?q=BM-10&pageSize=50');
  expect(list.ok()).toBe(true);
  const items: { code: string }[] = (await list.json()).items;
  if (!items.some((p) => p.code === 'BM-10')) {
    const { csrfToken } = await (await page.request.get('/api/auth/csrf')).json();
    const created = await page.request.post('/api/pipelines', {
      headers: { 'x-csrf-token': csrfToken },
      data: {
        code: 'BM-10', name: LINE, product: 'refined_products', nps: 10, schedule: '40', mopPsig: 1100, startPosition: 0, endPosition: 30.4,
        sites: [{ name: 'Cedar Run Station', position: 0 }, { name: 'Haddon Fork Terminal', position: 30.4 }],
      },
    });
    expect(created.status(), await created.text()).toBe(201);
  }
  await context.close();
}

const dialog = (page: Page) => page.getByRole('dialog');

async function takeAction(page: Page, action: string, fill?: (d: ReturnType<typeof dialog>) => Promise<void>) {
  await page.getByTestId('permit-state').waitFor();
  // The actions are on the permit's summary, not in its sections.
  if (!/\/permits\/[0-9a-f-]{36}$/.test(page.url())) await openPermitSection(page, 'Summary');
  await page.getByRole('button', { name: action, exact: true }).click();
  await expect(dialog(page)).toBeVisible();
  if (fill) await fill(dialog(page));
  await dialog(page).getByRole('button', { name: new RegExp(`^(Sign: )?${action}$`) }).click();
}

test.beforeAll(async ({ browser }) => {
  await ensureDemoLine(browser);
});

test('when the contractor lead requests hot work and the authoriser sends it back, approves and the lead accepts, then each step is signed, recorded and printable', async ({ browser }) => {
  test.setTimeout(400_000);
  const tomorrow = format(addDays(new Date(), 1), 'yyyy-MM-dd');
  const lead = await signedInPage(browser, LEAD);

  // The list, from the navigation.
  await lead.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Permits', exact: true }).click();
  await expect(lead.getByRole('heading', { name: 'Permits', level: 1 })).toBeVisible();
  await lead.getByRole('link', { name: 'Request a permit' }).first().click();
  await expect(lead).toHaveURL(/\/permits\/new$/);
  await expect(lead.getByText('Caution', { exact: true })).toBeVisible();

  // Step 1 — Next checks this step's own fields before moving on.
  await lead.getByRole('button', { name: 'Next' }).click();
  await expect(lead.getByText('Choose at least one kind of work.')).toBeVisible();
  await expect(lead.getByRole('heading', { name: /Step 1 of 5: Job/ })).toBeVisible();
  await lead.getByLabel('Hot work').check();
  await lead.getByLabel('Title').fill('Weld sleeve over dent near Tansy Hollow');
  await lead.getByLabel('Scope of work').fill('Grind, inspect and weld a full-encirclement sleeve over a 12 in dent on the 10 in line.');
  await lead.getByLabel('Job reference (optional)').fill('OX-4471');
  await lead.getByRole('button', { name: 'Next' }).click();

  // Step 2 — the place, in mileposts (the tenant's unit).
  await expect(lead.getByRole('heading', { name: /Step 2 of 5: Place/ })).toBeVisible();
  await lead.getByLabel('Pipeline').selectOption({ label: LINE });
  await lead.getByLabel('From milepost').fill('17.2');
  await lead.getByLabel('To milepost').fill('17.4');
  await lead.getByRole('button', { name: 'Next' }).click();

  // Step 3 — an end before the start is refused at the end field, and the step does not move on.
  await expect(lead.getByRole('heading', { name: /Step 3 of 5: Time and crew/ })).toBeVisible();
  await expect(lead.getByLabel('Contractor organisation').locator('option:checked')).toHaveText('Oxbow Line Repair');
  await expect(lead.getByLabel('Fire watch after hot work (minutes)')).toHaveValue('60');
  await lead.getByLabel('Valid from').fill(`${tomorrow}T07:00`);
  await lead.getByLabel('Valid to').fill(`${tomorrow}T06:00`);
  await lead.getByRole('button', { name: 'Next' }).click();
  await expect(lead.getByText('The permit must end after it starts.')).toBeVisible();
  await expect(lead.getByLabel('Valid to')).toHaveAttribute('aria-invalid', 'true');
  await expect(lead.getByRole('heading', { name: /Step 3 of 5/ })).toBeVisible();
  await lead.getByLabel('Valid to').fill(`${tomorrow}T15:00`);
  await expect(lead.getByLabel('Contractor lead (optional)').locator('option', { hasText: 'Rory Kilbride' })).toHaveCount(1);
  // Looser than the tenant allows (30 min): only the server knows, and its answer comes back to this field later.
  await lead.getByLabel('Gas test window before work (minutes, optional)').fill('45');
  await lead.getByRole('button', { name: 'Next' }).click();

  // Step 4 — method, hazards and PPE (common items and one of our own).
  await expect(lead.getByRole('heading', { name: /Step 4 of 5/ })).toBeVisible();
  await lead.getByLabel('Method statement').fill('Confirm 0 %LEL at the sleeve, set the fire blanket, weld to the qualified procedure, hold the fire watch.');
  await lead.getByRole('textbox', { name: 'Hazards', exact: true }).fill('Refined products vapour; hot work on a line in service; excavation edge.');
  await lead.getByLabel('Flame-resistant clothing').check();
  await lead.getByLabel('Welding helmet and gloves').check();
  await lead.getByLabel('Other PPE').fill('Welding screen');
  await lead.getByRole('button', { name: 'Add', exact: true }).click();
  await expect(lead.getByRole('list', { name: 'Other PPE' }).getByText('Welding screen')).toBeVisible();
  await lead.getByRole('button', { name: 'Next' }).click();

  // Review, then save the draft.
  await expect(lead.getByRole('heading', { name: /Step 5 of 5: Review/ })).toBeVisible();
  await expect(lead.getByText('MP 17.2 – MP 17.4')).toBeVisible();
  await expect(lead.getByText('60 minutes after hot work stops')).toBeVisible();
  // Reaching Review saves nothing by itself: the user still has to press Save draft.
  await expect(lead.getByRole('button', { name: 'Save draft' })).toBeEnabled();
  await expect(lead).toHaveURL(/\/permits\/new$/);
  await shot(lead, 'permit-new');
  await lead.getByRole('button', { name: 'Save draft' }).click();
  // The server's 400 lands beside the field, on the step that holds it.
  await expect(lead.getByRole('heading', { name: /Step 3 of 5/ })).toBeVisible();
  await expect(lead.getByText('The tenant allows at most 30 minutes between the gas test and the start of work.')).toBeVisible();
  await expect(lead.getByLabel('Gas test window before work (minutes, optional)')).toHaveAttribute('aria-invalid', 'true');
  await lead.getByLabel('Gas test window before work (minutes, optional)').fill('');
  await lead.getByRole('button', { name: 'Next' }).click();
  await lead.getByRole('button', { name: 'Next' }).click();
  await lead.getByRole('button', { name: 'Save draft' }).click();
  await expect(lead).toHaveURL(/\/permits\/[0-9a-f-]{36}$/);
  const permitUrl = lead.url();
  await expect(lead.getByTestId('permit-state')).toHaveText('Draft');
  const number = (await lead.getByRole('heading', { level: 1 }).innerText()).match(/PW-\d{4}-\d{4}/)?.[0];
  expect(number).toBeTruthy();
  // The Place section, one tap from the summary, names the range and draws the line with the work range laid over it.
  await openPermitSection(lead, 'Place');
  const place = lead.locator('section').filter({ has: lead.getByRole('heading', { name: 'Place', exact: true }) });
  await expect(place.getByText('MP 17.2 – MP 17.4')).toBeVisible();
  await expect(lead.getByTestId('overlay-work').first()).toBeVisible();

  await takeAction(lead, 'Send for approval');
  await expect(lead.getByTestId('permit-state')).toHaveText('Requested');

  // The authoriser sends it back: a reason is required.
  const authoriser = await signedInPage(browser, AUTHORISER);
  await authoriser.goto(permitUrl);
  await authoriser.getByRole('button', { name: 'Send back with reasons', exact: true }).click();
  await dialog(authoriser).getByRole('button', { name: 'Send back with reasons' }).click();
  await expect(dialog(authoriser).getByText('Give a reason in words (at least 3 characters).')).toBeVisible();
  await dialog(authoriser).getByLabel('Reason').fill('Name the fire watch person and add the face shield for grinding.');
  await dialog(authoriser).getByRole('button', { name: 'Send back with reasons' }).click();
  await expect(dialog(authoriser)).toHaveCount(0);
  await expect(authoriser.getByTestId('permit-state')).toHaveText('Draft');

  // The lead sees why, edits and sends it again.
  await lead.reload();
  await expect(lead.getByText('Name the fire watch person and add the face shield for grinding.').first()).toBeVisible();
  await lead.getByRole('link', { name: 'Edit draft' }).click();
  await expect(lead.getByLabel('Title')).toHaveValue('Weld sleeve over dent near Tansy Hollow');
  for (const heading of [/Step 2 of 5/, /Step 3 of 5/]) {
    await lead.getByRole('button', { name: 'Next' }).click();
    await expect(lead.getByRole('heading', { name: heading })).toBeVisible();
  }
  await expect(lead.getByLabel('Valid to')).toHaveValue(`${tomorrow}T15:00`);
  await lead.getByLabel('Fire watch person (optional)').fill('Casey Oldroyd');
  await lead.getByRole('button', { name: 'Next' }).click();
  await lead.getByLabel('Face shield').check();
  await lead.getByRole('button', { name: 'Next' }).click();
  await lead.getByRole('button', { name: 'Save changes' }).click();
  await expect(lead).toHaveURL(permitUrl);
  await openPermitSection(lead, 'Job');
  await expect(lead.getByText('Casey Oldroyd')).toBeVisible();
  await expect(lead.getByText('Face shield', { exact: true })).toBeVisible();
  await expect(lead.getByText('Welding screen', { exact: true })).toBeVisible();
  await takeAction(lead, 'Send for approval');
  await expect(lead.getByTestId('permit-state')).toHaveText('Requested');

  // The authoriser approves with a signature; a wrong password comes back from the server at its field.
  await authoriser.reload();
  await authoriser.getByRole('button', { name: 'Approve and issue', exact: true }).click();
  const approve = dialog(authoriser);
  await expect(approve.getByText('This cannot be undone')).toBeVisible();
  await approve.getByLabel('Your password').fill('not-my-password');
  await approve.getByLabel('Type your name as it appears: Priya Castellan').fill('Priya Castellan');
  await approve.getByRole('button', { name: 'Sign: Approve and issue' }).click();
  await expect(approve.getByText('That password is wrong. Type the password you sign in with.')).toBeVisible();
  await approve.getByLabel('Your password').fill(DEMO_PASSWORD);
  await approve.getByRole('button', { name: 'Sign: Approve and issue' }).click();
  await expect(dialog(authoriser)).toHaveCount(0);
  await expect(authoriser.getByTestId('permit-state')).toHaveText('Approved');

  // The lead accepts for the crew with a signature.
  await lead.reload();
  await takeAction(lead, 'Accept for the crew', async (d) => {
    await d.getByLabel('Your password').fill(DEMO_PASSWORD);
    await d.getByLabel('Type your name as it appears: Rory Kilbride').fill('Rory Kilbride');
  });
  await expect(lead.getByTestId('permit-state')).toHaveText('Accepted');
  await openPermitSection(lead, 'Signatures');
  const signatures = lead.getByTestId('signature');
  await expect(signatures).toHaveCount(2);
  await expect(signatures.filter({ hasText: 'Priya Castellan' })).toBeVisible();
  await expect(signatures.filter({ hasText: 'Rory Kilbride' })).toBeVisible();
  await openPermitSection(lead, 'Timeline');
  await expect(lead.getByTestId('timeline')).toContainText('Send back with reasons');
  await expect(lead.getByTestId('timeline')).toContainText('Name the fire watch person');
  // What still blocks Isolated stays visible with the isolation plan, down to the authoriser's signature.
  await openPermitSection(lead, 'Isolation plan');
  await expect(lead.getByTestId('isolation-blockers')).toContainText('Isolations-in-place signature missing');
  await expect(lead.getByRole('status').filter({ hasText: 'Accept for the crew: done' })).toHaveCount(0, { timeout: 10_000 });
  await shot(lead, 'permit-page');

  // The printable permit downloads from the summary and names its number (pdfkit writes the /Title info uncompressed).
  await openPermitSection(lead, 'Summary');
  const [download] = await Promise.all([lead.waitForEvent('download'), lead.getByRole('link', { name: 'Print permit' }).click()]);
  expect(download.suggestedFilename()).toBe(`${number}.pdf`);
  const pdf = await readFile(await download.path());
  expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
  expect(pdf.toString('latin1')).toContain(`Permit to work ${number}`);

  // The list shows it with its state in words.
  await lead.goto(`/permits?q=${number}`);
  await expect(lead.getByTestId('permit-row')).toHaveCount(1);
  await expect(lead.getByTestId('permit-row').getByTestId('permit-state')).toHaveText('Accepted');
  await lead.goto('/permits');
  await expect(lead.getByTestId('permit-row').first()).toBeVisible();
  await shot(lead, 'permits-list');

  // On a phone the permit page and the list fit the width.
  await lead.setViewportSize({ width: 390, height: 844 });
  await lead.goto(permitUrl);
  await expect(lead.getByTestId('permit-state')).toHaveText('Accepted');
  await noSideScroll(lead);
  await lead.goto('/permits');
  await expect(lead.getByTestId('permit-card').first()).toBeVisible();
  await noSideScroll(lead);
});

test('when a permit address does not exist, then the not-found text shows', async ({ browser }) => {
  const page = await signedInPage(browser, AUTHORISER);
  await page.goto('/permits/00000000-0000-4000-8000-000000000000');
  await expect(page.getByRole('heading', { name: 'Not found' })).toBeVisible();
});

test('when the state filter is set, then it is kept in the address and the list shows only that state', async ({ browser }) => {
  // A draft of its own, made through the API as the lead, so the test does not lean on the one above.
  const lead = await signedInPage(browser, LEAD);
  const [pipelines, organisations, csrf] = await Promise.all([
    lead.request.get('/api/pipelines?q=BM-10&pageSize=50').then((r) => r.json()),
    lead.request.get('/api/organisations?pageSize=100').then((r) => r.json()),
    lead.request.get('/api/auth/csrf').then((r) => r.json()),
  ]);
  const start = addDays(new Date(), 2);
  const created = await lead.request.post('/api/permits', {
    headers: { 'x-csrf-token': csrf.csrfToken },
    data: {
      kinds: ['cold_work'],
      title: 'Replace a corroded vent valve handle',
      pipelineId: pipelines.items.find((p: { code: string }) => p.code === 'BM-10').id,
      fromPosition: 9.8,
      toPosition: 9.8,
      validFrom: start.toISOString(),
      validTo: new Date(start.getTime() + 4 * 3_600_000).toISOString(),
      contractorOrganisationId: organisations.items.find((o: { name: string }) => o.name === 'Oxbow Line Repair').id,
    },
  });
  expect(created.status(), await created.text()).toBe(201);

  const page = await signedInPage(browser, AUTHORISER);
  await page.goto('/permits');
  await expect(page.getByTestId('permit-row').first()).toBeVisible();
  // FIXME 1: on a slow tablet (a loaded machine, or here a processor made eight times slower) the address bar
  // says state=draft a moment before the page renders it; meanwhile every state's rows are still on screen.
  const cpu = await page.context().newCDPSession(page);
  await cpu.send('Emulation.setCPUThrottlingRate', { rate: 8 });
  await page.locator('summary').filter({ hasText: 'State' }).click();
  await page.getByRole('checkbox', { name: 'Draft', exact: true }).check();
  await expect(page).toHaveURL(/state=draft/);
  // Until the new address is rendered and its page has arrived, the last rows stand in and the list says it is updating.
  await expect(page.getByTestId('permit-list')).toHaveAttribute('aria-busy', 'false');
  const states = page.getByTestId('permit-row').getByTestId('permit-state');
  await expect(states.first()).toBeVisible();
  for (const text of await states.allInnerTexts()) expect(text).toBe('Draft');
  await cpu.send('Emulation.setCPUThrottlingRate', { rate: 1 });
  await page.reload();
  await page.locator('summary').filter({ hasText: 'State' }).click();
  await expect(page.getByRole('checkbox', { name: 'Draft', exact: true })).toBeChecked();
  await page.getByRole('checkbox', { name: 'Closed', exact: true }).check();
  await page.getByRole('checkbox', { name: 'Draft', exact: true }).uncheck();
  await expect(page).toHaveURL(/state=closed/);
  // Updating, or no closed permit at all (then the list gives way to "No permit matches").
  await expect(page.locator('[data-testid="permit-list"][aria-busy="true"]')).toHaveCount(0);
  // Other specs may have closed permits by now: whatever shows is closed, and the drafts are gone.
  await expect(page.getByTestId('permit-row').getByTestId('permit-state').filter({ hasText: 'Draft' })).toHaveCount(0);
  for (const text of await states.allInnerTexts()) expect(text).toBe('Closed');
  await page.getByRole('searchbox', { name: 'Search number or title' }).fill('no permit has this title');
  await expect(page.getByText('No permit matches these filters.')).toBeVisible();
  await expect(page.getByRole('button', { name: 'Clear filters' }).first()).toBeVisible();
});

test('when someone changed the permit while it was open, then the action says so and the page reloads; Esc closes the dialog and focus returns', async ({ browser }) => {
  const lead = await signedInPage(browser, LEAD);
  const [pipelines, organisations, csrf] = await Promise.all([
    lead.request.get('/api/pipelines?q=BM-10&pageSize=50').then((r) => r.json()),
    lead.request.get('/api/organisations?pageSize=100').then((r) => r.json()),
    lead.request.get('/api/auth/csrf').then((r) => r.json()),
  ]);
  const start = addDays(new Date(), 3);
  const created = await lead.request.post('/api/permits', {
    headers: { 'x-csrf-token': csrf.csrfToken },
    data: {
      kinds: ['cold_work'],
      title: 'Paint the Tansy Hollow block valve',
      pipelineId: pipelines.items.find((p: { code: string }) => p.code === 'BM-10').id,
      fromPosition: 9.8,
      toPosition: 9.8,
      validFrom: start.toISOString(),
      validTo: new Date(start.getTime() + 4 * 3_600_000).toISOString(),
      contractorOrganisationId: organisations.items.find((o: { name: string }) => o.name === 'Oxbow Line Repair').id,
    },
  });
  expect(created.status()).toBe(201);
  const permit = await created.json();
  // With its live stream connected the page would fetch the change before the click; here the stream
  // does not get through (a weak signal, a proxy that drops it), so the action goes out with the version the page has.
  await lead.route('**/api/stream?**', (route) => route.abort());
  await lead.goto(`/permits/${permit.id}`);
  await expect(lead.getByTestId('permit-state')).toHaveText('Draft');

  const send = lead.getByRole('button', { name: 'Send for approval', exact: true });
  await send.click();
  await expect(dialog(lead)).toBeVisible();
  await expect(dialog(lead)).toHaveAttribute('aria-modal', 'true');
  await lead.keyboard.press('Escape');
  await expect(dialog(lead)).toHaveCount(0);
  await expect(send).toBeFocused();

  // Meanwhile the same draft is edited elsewhere (its version moves on).
  const edited = await lead.request.patch(`/api/permits/${permit.id}`, {
    headers: { 'x-csrf-token': csrf.csrfToken },
    data: { version: permit.version, title: 'Paint and tag the Tansy Hollow block valve' },
  });
  expect(edited.status(), await edited.text()).toBe(200);

  await send.click();
  await dialog(lead).getByRole('button', { name: 'Send for approval' }).click();
  await expect(lead.getByText('Someone changed this permit — reloaded. Check it and try again.')).toBeVisible();
  await expect(lead.getByRole('heading', { level: 1 })).toContainText('Paint and tag the Tansy Hollow block valve');
  await expect(lead.getByTestId('permit-state')).toHaveText('Draft');
  // Reloaded, the same step now goes through.
  await takeAction(lead, 'Send for approval');
  await expect(lead.getByTestId('permit-state')).toHaveText('Requested');
});

test('issue 17: when an authoriser changed a sent-back permit, then the permit page keeps Approve blocked for them and says why (four eyes, HSE HSG250)', async ({ browser }) => {
  const lead = await apiAs(LEAD);
  const authoriserApi = await apiAs(AUTHORISER);
  try {
    const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
    const contractorOrganisationId = me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId;
    const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get('/api/pipelines?q=BM-10&pageSize=50'));
    const now = Date.now();
    const created = await ok<{ id: string }>(
      lead.post('/api/permits', {
        kinds: ['cold_work'], title: 'Four eyes: coating repair at MP 25.1', scope: 'Repair the coating over a 2 ft holiday.', pipelineId: pipes.items.find((p) => p.code === 'BM-10')!.id,
        fromPosition: 25.1, toPosition: 25.11, methodStatement: 'Dig, clean, coat, inspect, backfill.', hazards: 'Open excavation.', ppe: ['Gloves'],
        validFrom: new Date(now - 60_000).toISOString(), validTo: new Date(now + 8 * 3600_000).toISOString(), contractorOrganisationId,
      }),
      201,
    );
    await transition(lead, created.id, 'submit');
    await transition(authoriserApi, created.id, 'reject', { reason: 'Say how deep the dig goes.' });
    const { version } = await ok<{ version: number }>(authoriserApi.get(`/api/permits/${created.id}`));
    await ok(authoriserApi.patch(`/api/permits/${created.id}`, { version, scope: 'Repair the coating over a 2 ft holiday; dig no deeper than 4 ft.' }));
    await transition(lead, created.id, 'submit');

    const authoriser = await signedInPage(browser, AUTHORISER);
    await authoriser.goto(`/permits/${created.id}`);
    await expect(authoriser.getByTestId('permit-state')).toHaveText('Requested');
    await expect(authoriser.getByRole('button', { name: 'Approve and issue', exact: true })).toBeDisabled();
    await expect(authoriser.getByTestId('action-approve')).toContainText('You wrote or changed this permit or its isolation plan, so another authoriser must approve it (four-eyes rule).');
    await authoriser.context().close();
  } finally {
    await Promise.all([lead.close(), authoriserApi.close()]);
  }
});
