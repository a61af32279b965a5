import { expect, test } from '@playwright/test';
import pg from 'pg';
import { acceptedPermit, apiAs, ok, proveAndSign } from './api-helpers';
import { noSideScroll, signedInPage } from './helpers';

// OSHA 29 CFR 1910.147(f)(3)(ii)(D): each person working puts a personal lock on the group lockbox when
// they begin and takes it off when they stop. On a phone (390 px wide) the technician signs on and off
// from the permit page's Lockbox section, every control at least 44 px tall.

async function setGroupLockout(value: 'per_permit' | 'per_person') {
  const db = new pg.Client({ connectionString: process.env.E2E_DATABASE_URL });
  await db.connect();
  try {
    await db.query(`UPDATE tenants SET settings = coalesce(settings, '{}'::jsonb) || jsonb_build_object('groupLockout', $1::text) WHERE slug = 'bramblecote'`, [value]);
  } finally {
    await db.end();
  }
}

test('finding GL-1 and issue 16 shift change: when the site locks per person, then a technician on a phone signs on to the lockbox with a personal lock, signs off again, and hands their lock over to the oncoming technician', async ({ browser }) => {
  test.setTimeout(120_000);
  await setGroupLockout('per_person');
  try {
    const permit = await acceptedPermit('Repack the stem of CR-BV-098 (lockbox check)', ['CR-BV-098', 'CR-VT-099']);
    const [tech, tech2, control] = await Promise.all(['tech@oxbow-repair.example', 'tech2@oxbow-repair.example', 'control@bramblecote.example'].map(apiAs));
    try {
      const plan = await ok<{ items: { id: string; kind: string; remotelyOperable: boolean }[] }>(tech.get(`/api/permits/${permit.id}/isolations`));
      for (const step of plan.items) {
        const body: Record<string, unknown> = {};
        if (step.kind === 'block_valve') {
          const [lock] = (await ok<{ items: { id: string }[] }>(tech.get('/api/locks?state=in_store&pageSize=1'))).items;
          const [tag] = (await ok<{ items: { id: string }[] }>(tech.get('/api/tags?state=in_store&pageSize=1'))).items;
          Object.assign(body, { lockId: lock.id, tagId: tag.id });
        }
        await ok(tech.post(`/api/permits/${permit.id}/isolations/${step.id}/apply`, body));
        if (step.remotelyOperable) await ok(control.post(`/api/permits/${permit.id}/isolations/${step.id}/acknowledge`, { what: 'remote_inhibited' }));
        await ok(tech2.post(`/api/permits/${permit.id}/isolations/${step.id}/verify`, { method: 'position_checked' }));
      }
    } finally {
      await Promise.all([tech, tech2, control].map((u) => u.close()));
    }
    await proveAndSign(permit.id);

    const page = await signedInPage(browser, 'tech@oxbow-repair.example');
    await page.setViewportSize({ width: 390, height: 844 });
    await page.goto(`/permits/${permit.id}`);
    const box = page.locator('section, div').filter({ has: page.getByRole('heading', { name: 'Lockbox', exact: true }) }).last();
    await expect(box).toContainText('Nobody is signed on.');
    const field = box.getByLabel('Your personal lock number');
    const signOn = box.getByRole('button', { name: 'Sign on', exact: true });
    for (const target of [field, signOn]) expect((await target.boundingBox())!.height).toBeGreaterThanOrEqual(44);
    await field.fill('PL-77');
    await signOn.click();
    await expect(box.getByRole('list', { name: 'People signed on' })).toContainText('Sam Ferrand');
    await expect(box).toContainText('PL-77');
    await noSideScroll(page);
    const signOff = box.getByRole('button', { name: /Sign off/ });
    expect((await signOff.boundingBox())!.height).toBeGreaterThanOrEqual(44);
    await signOff.click();
    await expect(box).toContainText('Nobody is signed on.');

    // Issue 16, shift change (OSHA 29 CFR 1910.147(f)(4)): on again, then "Hand over my lock" in one tap; the oncoming
    // technician signs beside them and their personal lock goes on as Sam's comes off.
    await field.fill('PL-79');
    await signOn.click();
    await expect(box).toContainText('PL-79');
    const handOver = box.getByRole('button', { name: 'Hand over my lock' });
    expect((await handOver.boundingBox())!.height).toBeGreaterThanOrEqual(44);
    await handOver.click();
    const form = box.getByRole('form', { name: 'Hand over my lock' });
    await form.getByLabel('Their personal lock number', { exact: true }).fill('PL-80');
    await form.getByLabel('Their sign-in e-mail', { exact: true }).fill('tech2@oxbow-repair.example');
    await form.getByLabel('Their name', { exact: true }).fill('Ana Lisgar');
    await form.getByLabel('Their password', { exact: true }).fill('holdpoint-demo');
    await form.getByLabel('Your name', { exact: true }).fill('Sam Ferrand');
    await form.getByLabel('Your password', { exact: true }).fill('holdpoint-demo');
    const send = form.getByRole('button', { name: 'Hand over', exact: true });
    for (const target of [send, form.getByLabel('Their password', { exact: true })]) expect((await target.boundingBox())!.height).toBeGreaterThanOrEqual(44);
    await noSideScroll(page);
    await send.click();
    const onBox = box.getByRole('list', { name: 'People signed on' });
    await expect(onBox).toContainText('Ana Lisgar');
    await expect(onBox).toContainText('PL-80');
    await expect(onBox).not.toContainText('Sam Ferrand');
    await page.context().close();
  } finally {
    await setGroupLockout('per_permit');
  }
});
