// Isolation certificates on a phone (HSE HSG253, HSG250, common practice): a certificate two permits work
// under, kept long-term, read and re-checked at 390 px wide with 44 px targets.
import { expect, test } from '@playwright/test';
import { acceptedPermit, apiAs, ok, proveAndSign } from './api-helpers';
import { noSideScroll, shot, signedInPage } from './helpers';

const TECH = 'tech@oxbow-repair.example';
const CONTROL = 'control@bramblecote.example';
const phone = { width: 390, height: 844 };

let first: { id: string; number: string };
let certificate = '';

test.beforeAll(async () => {
  // The first permit isolates at CR-BV-046 and proves the section at CR-DR-048: the signature issues the certificate.
  first = await acceptedPermit('Certificate check: repack CR-BV-046', ['CR-BV-046', 'CR-DR-048']);
  const [tech, tech2, lead, authoriser] = await Promise.all([TECH, 'tech2@oxbow-repair.example', 'lead@oxbow-repair.example', 'authoriser@bramblecote.example'].map(apiAs));
  try {
    const plan = await ok<{ items: { id: string; kind: string }[] }>(tech.get(`/api/permits/${first.id}/isolations`));
    for (const step of plan.items) {
      const body: Record<string, unknown> = {};
      if (step.kind === 'block_valve') {
        const [lock] = (await ok<{ items: { id: string }[] }>(tech.get('/api/locks?state=in_store&pageSize=1'))).items;
        const [tag] = (await ok<{ items: { id: string }[] }>(tech.get('/api/tags?state=in_store&pageSize=1'))).items;
        Object.assign(body, { lockId: lock.id, tagId: tag.id });
      }
      await ok(tech.post(`/api/permits/${first.id}/isolations/${step.id}/apply`, body));
      await ok(tech2.post(`/api/permits/${first.id}/isolations/${step.id}/verify`, { method: 'position_checked' }));
    }
    await proveAndSign(first.id);
    const page = await ok<{ items: { id: string }[] }>(authoriser.get(`/api/certificates?permitId=${first.id}`));
    certificate = page.items[0].id;
    // A second permit at the same valve relies on it instead of isolating again; the authoriser keeps it long-term.
    const mine = await ok<{ pipelineId: string; contractorOrganisationId: string; validFrom: string; validTo: string }>(lead.get(`/api/permits/${first.id}`));
    const second = await ok<{ id: string }>(
      lead.post('/api/permits', {
        kinds: ['cold_work'], title: 'Certificate check: paint the valve body', pipelineId: mine.pipelineId, fromPosition: 4.6, toPosition: 4.6,
        validFrom: mine.validFrom, validTo: mine.validTo, contractorOrganisationId: mine.contractorOrganisationId,
      }),
      201,
    );
    await ok(lead.post(`/api/permits/${second.id}/certificate`, { certificateId: certificate }));
    await ok(authoriser.post(`/api/certificates/${certificate}/long-term`, { reason: 'The valve stays shut until the new actuator is fitted.' }));
  } finally {
    await Promise.all([tech, tech2, lead, authoriser].map((u) => u.close()));
  }
});

test('when the technician opens the long-term isolation on a phone and records a passing re-check, then it shows with its next due time; the control room sees both permits and the permit page links it', async ({ browser }) => {
  const tech = await signedInPage(browser, TECH);
  await tech.setViewportSize(phone);
  await tech.goto('/certificates?longTerm=true');
  await expect(tech.getByRole('heading', { name: 'Isolation certificates', level: 1 })).toBeVisible();
  const row = tech.getByTestId('certificate-row').first();
  await expect(row.getByTestId('certificate-status')).toContainText('Long-term isolation: next re-check due');
  await expect(row).toContainText('2 permit(s) working under it');
  await noSideScroll(tech);
  await row.getByRole('link').first().click();
  await expect(tech.getByRole('heading', { level: 1 })).toContainText('Isolation certificate IC-');
  await tech.getByLabel('Every lock and tag is on and intact').check();
  await tech.getByLabel('Every valve is still fully closed').check();
  // A reading left out is named beside its field, not sent.
  await tech.getByRole('button', { name: 'Record re-check' }).click();
  await expect(tech.getByText('Enter the pressure the gauge shows, as a number.')).toBeVisible();
  await tech.getByLabel('Gauge reading at the section').fill('0');
  const submit = tech.getByRole('button', { name: 'Record re-check' });
  expect((await submit.boundingBox())!.height).toBeGreaterThanOrEqual(44);
  await submit.click();
  await expect(tech.getByText('Re-check recorded: the isolation holds.')).toBeVisible();
  await expect(tech.getByRole('list', { name: 'Re-checks' }).getByText(/^Passed/)).toBeVisible();
  await noSideScroll(tech);
  await shot(tech, 'certificate-long-term-phone');

  const control = await signedInPage(browser, CONTROL);
  await control.setViewportSize(phone);
  await control.goto(`/certificates/${certificate}`);
  const permits = control.getByRole('list', { name: 'Permits on the certificate' });
  await expect(permits.getByRole('listitem')).toHaveCount(2);
  await expect(permits).toContainText('relies on it');
  // The control room reads; the forms are not offered.
  await expect(control.getByRole('button', { name: /Return|Keep as a long-term|Record re-check/ })).toHaveCount(0);
  await noSideScroll(control);
  await control.goto(`/permits/${first.id}`);
  await expect(control.getByTestId('permit-certificate')).toContainText('Isolation certificate: IC-');
});
