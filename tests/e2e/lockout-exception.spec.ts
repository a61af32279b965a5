import { expect, test, type Page } from '@playwright/test';
import { acceptedPermit, apiAs, ok, transition } from './api-helpers';
import { DEMO_PASSWORD, mailTo, openPermitSection, signedInPage } from './helpers';

// OSHA 29 CFR 1910.147(e)(3): a lock comes off by the hand that put it on; (e)(3)(i)–(iii) the exception
// when its owner is not on site. Ana Lisgar (second technician) locks CR-BV-000 and goes home; the permit
// is cancelled; Sam Ferrand must not see a plain "Remove" but the exception procedure, which the
// authoriser records before Sam takes the lock off and signs for it.

const TECH = 'tech@oxbow-repair.example';
const TECH2 = 'tech2@oxbow-repair.example';
const AUTHORISER = 'authoriser@bramblecote.example';
const VALVE = 'CR-BV-000';

const step = (page: Page) => page.locator(`[data-testid="isolation-step"][data-label="${VALVE}"]`);

test('finding I-1: when a technician did not put the lock on, then the step offers the exception procedure instead of Remove, and the lock comes off only once an authoriser has recorded it', async ({ browser }) => {
  test.setTimeout(120_000);
  const permit = await acceptedPermit(`Replace the packing of ${VALVE}`, [VALVE]);
  const [tech2, lead, control] = await Promise.all([apiAs(TECH2), apiAs('lead@oxbow-repair.example'), apiAs('control@bramblecote.example')]);
  try {
    const plan = await ok<{ items: { id: string; remotelyOperable: boolean }[] }>(tech2.get(`/api/permits/${permit.id}/isolations`));
    const [lock] = (await ok<{ items: { id: string }[] }>(tech2.get('/api/locks?state=in_store&pageSize=1'))).items;
    const [tag] = (await ok<{ items: { id: string }[] }>(tech2.get('/api/tags?state=in_store&pageSize=1'))).items;
    await ok(tech2.post(`/api/permits/${permit.id}/isolations/${plan.items[0].id}/apply`, { lockId: lock.id, tagId: tag.id }));
    if (plan.items[0].remotelyOperable) await ok(control.post(`/api/permits/${permit.id}/isolations/${plan.items[0].id}/acknowledge`, { what: 'remote_inhibited' }));
    await transition(lead, permit.id, 'cancel', { reason: 'Packing delivered wrong size; job off for today.' });
  } finally {
    await Promise.all([tech2, lead, control].map((u) => u.close()));
  }
  const url = `/permits/${permit.id}`;

  // Sam did not put the lock on: no plain "Remove"; the exception procedure says what an authoriser must record first.
  const tech = await signedInPage(browser, TECH);
  await tech.goto(url);
  await openPermitSection(tech, 'Isolation plan');
  await expect(step(tech)).toHaveAttribute('data-status', 'applied');
  await expect(step(tech).getByRole('button', { name: 'Remove', exact: true })).toHaveCount(0);
  await step(tech).getByRole('button', { name: 'Remove under the exception procedure' }).click();
  let dialog = tech.getByRole('dialog');
  await expect(dialog).toContainText('Ana Lisgar put lock');
  await expect(dialog).toContainText('how and when they tried to reach Ana Lisgar');
  await expect(dialog.getByRole('status')).toContainText('An authoriser must record the exception first');
  await dialog.getByRole('button', { name: 'Close', exact: true }).last().click();
  await expect(dialog).toHaveCount(0);

  // The authoriser records it, signed.
  const authoriser = await signedInPage(browser, AUTHORISER);
  await authoriser.goto(url);
  await openPermitSection(authoriser, 'Isolation plan');
  await step(authoriser).getByRole('button', { name: 'Remove under the exception procedure' }).click();
  const form = authoriser.getByTestId('exception-form');
  await form.getByLabel('How you checked Ana Lisgar is not on site').fill('Not on the gate log since 14:00; site radio unanswered.');
  await form.getByLabel('Attempt 1: how').fill('Phoned her mobile, no answer');
  await form.getByRole('button', { name: 'Add another attempt' }).click();
  await form.getByLabel('Attempt 2: how').fill('Left a message with her supervisor');
  await form.getByLabel('How Ana Lisgar will be told before coming back to work').fill('Her supervisor tells her at the gate before her next shift.');
  await form.getByLabel('Your password').fill(DEMO_PASSWORD);
  await form.getByLabel('Type your name as it appears: Priya Castellan').fill('Priya Castellan');
  await form.getByRole('checkbox').check();
  await form.getByRole('button', { name: 'Sign: record the exception' }).click();
  await expect(authoriser.getByRole('dialog')).toHaveCount(0);
  await expect(step(authoriser)).toContainText('Exception recorded');

  // Sam goes on to take it off, and signs for it.
  await tech.reload();
  // The plan kept on the device shows first; wait for the server's, with the exception in it.
  await expect(step(tech)).toContainText('Exception recorded');
  await step(tech).getByRole('button', { name: 'Remove under the exception procedure' }).click();
  dialog = tech.getByRole('dialog');
  await expect(dialog.getByTestId('exception-recorded')).toContainText('Priya Castellan recorded it');
  await dialog.getByRole('button', { name: 'Continue to remove' }).click();
  dialog = tech.getByRole('dialog');
  await expect(dialog).toContainText("This is Ana Lisgar's lock");
  await dialog.getByLabel('Your password').fill(DEMO_PASSWORD);
  await dialog.getByLabel('Type your name as it appears: Sam Ferrand').fill('Sam Ferrand');
  await dialog.getByRole('checkbox').check();
  await dialog.getByRole('button', { name: 'Sign: remove isolation' }).click();
  await expect(dialog).toHaveCount(0);
  await expect(step(tech)).toHaveAttribute('data-status', 'removed');
  await expect(step(tech)).toContainText('Under the exception procedure, authorised by Priya Castellan');

  // Ana hears that her lock is off, and whom to see before she starts again.
  const mail = await mailTo(browser, TECH2, /taken off while you were away/);
  expect(mail).toContain('by Sam Ferrand');
  expect(mail).toContain('speak to Priya Castellan');
  await Promise.all([tech, authoriser].map((p) => p.context().close()));
});
