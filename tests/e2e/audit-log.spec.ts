import AxeBuilder from '@axe-core/playwright';
import { readFileSync } from 'node:fs';
import { expect, test } from '@playwright/test';
import { apiAs, ok, transition } from './api-helpers';
import { noSideScroll, signInOnPhone } from './helpers';

/*
 * The audit log (issue 21) on a phone: the auditor filters the tenant's trail down to one permit's
 * submission, checks the chain, and downloads the filtered entries. The permit is this file's own,
 * on temporary points no other spec uses.
 */

const phone = { viewport: { width: 390, height: 844 }, hasTouch: true, isMobile: true };

test.describe('audit log', () => {
  let permit = { id: '', number: '' };

  test.beforeAll(async () => {
    const lead = await apiAs('lead@oxbow-repair.example');
    const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
    const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get('/api/pipelines?q=BM-10&pageSize=50'));
    const now = Date.now();
    const created = await ok<{ id: string; number: string; version: number }>(
      lead.post('/api/permits', {
        kinds: ['cold_work'], title: 'Audit log check: replace a gauge', scope: 'Replace a pressure gauge.', pipelineId: pipes.items.find((p) => p.code === 'BM-10')!.id,
        fromPosition: 24.0, toPosition: 24.1, methodStatement: 'Close, lock and tag; bleed at the vent; replace the gauge; restore.', hazards: 'Trapped pressure.', ppe: ['Gloves'],
        validFrom: new Date(now - 60_000).toISOString(), validTo: new Date(now + 8 * 3600_000).toISOString(),
        contractorOrganisationId: me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId,
      }),
      201,
    );
    await ok(
      lead.put(`/api/permits/${created.id}/isolations`, {
        version: created.version,
        steps: [
          { tempLabel: 'AL-BV-1', tempPosition: 24.0, kind: 'block_valve' },
          { tempLabel: 'AL-VT-1', tempPosition: 24.1, kind: 'vent' },
        ],
        deadEnds: { downstream: 'Test line: capped beyond the work, no product can come from downstream.' },
      }),
    );
    await transition(lead, created.id, 'submit');
    permit = { id: created.id, number: created.number };
  });

  test('the auditor filters the log, verifies the chain and downloads the entries, on a phone', async ({ browser }) => {
    const context = await browser.newContext(phone);
    const page = await context.newPage();
    await signInOnPhone(page, 'auditor@bramblecote.example');
    await page.goto('/audit');
    await expect(page.getByRole('heading', { name: 'Audit log', level: 1 })).toBeVisible();
    await expect(page.getByTestId('audit-row').first()).toBeVisible();

    await page.getByLabel('What happened').selectOption('submit');
    const row = page.getByTestId('audit-row').filter({ hasText: permit.number });
    await expect(row).toHaveCount(1);
    await expect(row).toContainText('Send for approval');
    await row.getByRole('button', { name: 'Only this permit' }).tap();
    await expect(page.getByText('Showing one permit only.')).toBeVisible();
    await expect(page.getByTestId('audit-row')).toHaveCount(1);
    await noSideScroll(page);

    await page.getByRole('button', { name: /Verify the chain/ }).tap();
    await expect(page.getByTestId('chain-check')).toContainText(/Chain verified to entry [\d,]+ at/, { timeout: 30_000 });

    const [csv] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-csv').tap()]);
    expect(csv.suggestedFilename()).toMatch(/^audit-log-.*\.csv$/);
    const text = readFileSync((await csv.path())!, 'utf8');
    expect(text.split('\r\n')[0]).toMatch(/^Entry,Time \(site\)/);
    expect(text).toContain(permit.number);

    const { violations } = await new AxeBuilder({ page }).analyze();
    const grave = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    console.log(`axe audit log: ${grave.length} serious/critical, ${violations.length - grave.length} minor/moderate`);
    expect(grave.map((v) => `${v.id}: ${v.help}`)).toEqual([]);
    await context.close();
  });
});
