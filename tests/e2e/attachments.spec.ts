import { expect, test } from '@playwright/test';
import { crc32, deflateSync } from 'node:zlib';
import { openPermitSection, shot, signIn } from './helpers';
import { apiAs, ok } from './api-helpers';

/** A real 1×1 PNG (PNG specification, ISO/IEC 15948): signature, IHDR, IDAT, IEND with CRCs. */
function png(): Buffer {
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body));
    return Buffer.concat([len, body, crc]);
  };
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', Buffer.from([0, 0, 0, 1, 0, 0, 0, 1, 8, 2, 0, 0, 0])),
    chunk('IDAT', deflateSync(Buffer.from([0, 0x2f, 0x6b, 0x4f]))),
    chunk('IEND', Buffer.alloc(0)),
  ]);
}

async function draftPermit(title: string) {
  const lead = await apiAs('lead@oxbow-repair.example');
  try {
    const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
    const contractorOrganisationId = me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId;
    const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get('/api/pipelines?q=BM-10&pageSize=50'));
    const now = Date.now();
    const created = await ok<{ id: string }>(
      lead.post('/api/permits', {
        kinds: ['cold_work'], title, pipelineId: pipes.items.find((p) => p.code === 'BM-10')!.id, fromPosition: 22, toPosition: 22.1,
        validFrom: new Date(now + 3600_000).toISOString(), validTo: new Date(now + 9 * 3600_000).toISOString(), contractorOrganisationId,
      }),
      201,
    );
    return created.id;
  } finally {
    await lead.close();
  }
}

test('when the lead uploads a photo on a permit, then progress ends in the list with a link; a disguised program is refused in words', async ({ page }) => {
  const id = await draftPermit('Photograph the coating defect at MP 22');
  await signIn(page, 'lead@oxbow-repair.example');
  await page.goto(`/permits/${id}`);
  await openPermitSection(page, 'Attachments');
  const files = page.getByLabel('File to add');
  await files.setInputFiles({ name: 'coating defect.png', mimeType: 'image/png', buffer: png() });
  await page.getByRole('button', { name: 'Upload' }).click();
  const list = page.getByRole('list', { name: 'Files on this permit' });
  await expect(list.getByRole('link', { name: /coating defect\.png/ })).toBeVisible();
  await expect(list).toContainText('PNG image');
  await expect(list).toContainText('Added by Rory Kilbride');

  await files.setInputFiles({ name: 'photo.jpg', mimeType: 'image/jpeg', buffer: Buffer.concat([Buffer.from([0x7f, 0x45, 0x4c, 0x46, 2, 1, 1, 0]), Buffer.alloc(120)]) });
  await page.getByRole('button', { name: 'Upload' }).click();
  await expect(page.getByRole('alert').filter({ hasText: /not accepted/ })).toBeVisible();
  await expect(list.getByRole('listitem')).toHaveCount(1);

  const href = await list.getByRole('link', { name: /coating defect\.png/ }).getAttribute('href');
  const res = await page.request.get(href!);
  expect(res.status()).toBe(200);
  expect(res.headers()['x-content-type-options']).toBe('nosniff');
  expect(Buffer.compare(await res.body(), png())).toBe(0);
  await shot(page, 'permit-attachments');
});

test('when the permit is opened on a phone, then the files section fits without sideways scrolling', async ({ page }) => {
  const id = await draftPermit('Check the files section on a phone');
  await signIn(page, 'lead@oxbow-repair.example');
  await page.setViewportSize({ width: 390, height: 844 });
  await page.goto(`/permits/${id}`);
  await openPermitSection(page, 'Attachments');
  await expect(page.getByLabel('File to add')).toBeVisible();
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(0);
  const upload = page.getByRole('button', { name: 'Upload' });
  expect((await upload.boundingBox())!.height).toBeGreaterThanOrEqual(44);
});
