import { expect, test } from '@playwright/test';
import { acceptedPermit, apiAs, ok } from './api-helpers';
import { signIn } from './helpers';

test('scratch', async ({ browser }) => {
  test.setTimeout(120_000);
  const p = await acceptedPermit('Scratch permit', ['CR-BV-046', 'CR-DR-048', 'CR-VT-047']);
  const ctx = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  const page = await ctx.newPage();
  await signIn(page, 'tech@oxbow-repair.example');
  await page.goto(`/permits/${p.id}`);
  await expect(page.getByTestId('isolation-step').first()).toBeVisible();
  await page.getByTestId('isolation-plan').screenshot({ path: '/tmp/iso-tech.png' });
  await page.getByTestId('isolation-step').first().getByRole('button', { name: 'Apply' }).click();
  await page.getByRole('dialog').screenshot({ path: '/tmp/iso-apply.png' });
  await page.keyboard.press('Escape');
  await expect(page.getByRole('dialog')).toBeHidden();
  // draft as lead with editor
  const lead = await apiAs('lead@oxbow-repair.example');
  const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
  const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get('/api/pipelines?q=BM-10&pageSize=50'));
  const created = await ok<{ id: string }>(lead.post('/api/permits', { kinds: ['hot_work'], title: 'Draft cut', pipelineId: pipes.items[0].id, fromPosition: 17.29, toPosition: 17.31, validFrom: new Date().toISOString(), validTo: new Date(Date.now() + 3600_000 * 8).toISOString(), contractorOrganisationId: me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId }), 201);
  const lp = await (await browser.newContext()).newPage();
  await signIn(lp, 'lead@oxbow-repair.example');
  await lp.setViewportSize({ width: 390, height: 844 });
  console.log('CREATED', JSON.stringify(created).slice(0,200));
  await lp.goto(`/permits/${created.id}`);
  console.log('URL', lp.url());
  await lp.getByRole('button', { name: 'Propose a plan for the cut' }).click();
  await expect(lp.getByTestId('plan-row').first()).toBeVisible();
  await lp.getByTestId('plan-editor').screenshot({ path: '/tmp/iso-editor.png' });
  console.log('SCROLL', await lp.evaluate(() => [document.documentElement.scrollWidth, window.innerWidth]));
  await lp.getByRole('button', { name: 'Save plan' }).click();
  await expect(lp.getByText(/Plan saved/)).toBeVisible();
  await lp.getByTestId('isolation-plan').screenshot({ path: '/tmp/iso-saved.png' });
});
