// Issue 21, the dossier: made from the permit page on a phone, with its progress, then downloaded.
import { readFile } from 'node:fs/promises';
import { expect, test } from '@playwright/test';
import { acceptedPermit } from './api-helpers';
import { noSideScroll, openPermitSection, signInOnPhone } from './helpers';

const phone = { viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true };

test('issue 21: when an auditor on a phone asks for the dossier of a permit, then it is made and downloads as one PDF', async ({ browser }) => {
  // A permit of its own, past draft, on a point no other browser test uses.
  const permit = await acceptedPermit('Dossier check: flush the drain CR-DR-151', ['CR-DR-151']);

  const context = await browser.newContext(phone);
  const page = await context.newPage();
  await signInOnPhone(page, 'auditor@bramblecote.example');
  await page.goto(`/permits/${permit.id}`);
  await openPermitSection(page, 'Summary');
  const make = page.getByRole('button', { name: 'Dossier (PDF)' });
  await expect(make).toBeVisible();
  // Big enough for a gloved finger.
  expect((await make.boundingBox())!.height).toBeGreaterThanOrEqual(44);
  await make.tap();
  const get = page.getByRole('link', { name: 'Download dossier (PDF)' });
  await expect(get).toBeVisible({ timeout: 30_000 });
  await noSideScroll(page);
  const [download] = await Promise.all([page.waitForEvent('download'), get.tap()]);
  expect(download.suggestedFilename()).toBe(`${permit.number}-dossier.pdf`);
  const pdf = await readFile(await download.path());
  expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
  // pdfkit writes the document's /Title uncompressed.
  expect(pdf.toString('latin1')).toContain(`Dossier for permit ${permit.number}`);
  await context.close();
});
