import AxeBuilder from '@axe-core/playwright';
import { expect, test, type Browser, type BrowserContext, type Locator, type Page } from '@playwright/test';
import { livePermit, ok } from './api-helpers';
import { DEMO_PASSWORD, signIn } from './helpers';

/*
 * Quality a person notices in the field: every main page read by axe-core as the person who uses
 * it, the main permit flow by keyboard alone with a focus ring you can see, and every page usable on
 * a tablet and a phone in gloves (no sideways scrolling, targets of at least 44 × 44 CSS px).
 */

type Role = 'anonymous' | 'lead' | 'authoriser' | 'admin';
const accounts: Record<Exclude<Role, 'anonymous'>, string> = {
  lead: 'lead@oxbow-repair.example',
  authoriser: 'authoriser@bramblecote.example',
  admin: 'admin@bramblecote.example',
};

interface MainPage {
  name: string;
  role: Role;
  path: () => string;
  /** Something that is only there once the page's data has arrived. */
  ready?: (page: Page) => Locator;
}

let permitId = '';
let pipelineId = '';

const mainPages: MainPage[] = [
  { name: 'sign-in', role: 'anonymous', path: () => '/sign-in' },
  { name: 'forgot-password', role: 'anonymous', path: () => '/forgot-password' },
  { name: 'overview', role: 'lead', path: () => '/' },
  { name: 'permits-list', role: 'lead', path: () => '/permits', ready: (p) => p.locator('[data-testid="permit-row"]:visible, [data-testid="permit-card"]:visible').first() },
  { name: 'permit-page', role: 'lead', path: () => `/permits/${permitId}`, ready: (p) => p.getByTestId('permit-summary') },
  { name: 'permit-isolation-plan', role: 'lead', path: () => `/permits/${permitId}/isolations`, ready: (p) => p.getByTestId('isolation-step').first() },
  { name: 'new-permit', role: 'lead', path: () => '/permits/new', ready: (p) => p.getByRole('heading', { name: /Step 1 of 5/ }) },
  { name: 'pipelines-list', role: 'authoriser', path: () => '/pipelines', ready: (p) => p.getByTestId('pipeline-row').first() },
  { name: 'pipeline-page', role: 'authoriser', path: () => `/pipelines/${pipelineId}`, ready: (p) => p.getByTestId('schematic-strip') },
  { name: 'locks-tags', role: 'authoriser', path: () => '/locks', ready: (p) => p.getByTestId('inventory-row').first() },
  { name: 'live-board', role: 'authoriser', path: () => '/board', ready: (p) => p.getByTestId('board-row').first() },
  { name: 'instruments', role: 'authoriser', path: () => '/instruments', ready: (p) => p.getByTestId('instrument-row').first() },
  { name: 'calculator', role: 'authoriser', path: () => '/calculator' },
  { name: 'admin-people', role: 'admin', path: () => '/admin/users', ready: (p) => p.getByTestId('user-row').first() },
  { name: 'admin-organisations', role: 'admin', path: () => '/admin/organisations' },
  { name: 'admin-qualifications', role: 'admin', path: () => '/admin/qualifications', ready: (p) => p.getByTestId('qualification-row').first() },
];

// One browser context per role for the whole file: signing in once each keeps the file quick.
const contexts = new Map<Role, BrowserContext>();
const pages = new Map<Role, Page>();

async function pageFor(browser: Browser, role: Role): Promise<Page> {
  const known = pages.get(role);
  if (known) return known;
  const context = await browser.newContext();
  const page = await context.newPage();
  if (role !== 'anonymous') await signIn(page, accounts[role]);
  contexts.set(role, context);
  pages.set(role, page);
  return page;
}

/** Opens the page and waits until its data is shown and nothing is still loading. */
async function open(page: Page, main: MainPage) {
  await page.goto(main.path());
  await expect(page.locator('h1').first()).toBeVisible();
  if (main.ready) await expect(main.ready(page)).toBeVisible();
  await expect(page.locator('[role="status"] .animate-spin')).toHaveCount(0);
}

test.beforeAll(async ({ browser }) => {
  const lead = await pageFor(browser, 'lead');
  // The browser tests' database holds the demo lines but no demo permits: a live one is made through the API, as the crew would.
  const permits = await ok<{ items: { id: string; state: string }[] }>(lead.request.get('/api/permits?state=live&pageSize=50'));
  permitId = permits.items.find((p) => p.state === 'live')?.id ?? (await livePermit('Repack the stem of CR-BV-252 (keyboard and screen-reader check)', ['CR-BV-252', 'CR-VT-253'])).id;
  const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.request.get('/api/pipelines?q=BM-10&pageSize=50'));
  pipelineId = pipes.items.find((p) => p.code === 'BM-10')!.id;
});

test.afterAll(async () => {
  for (const context of contexts.values()) await context.close();
  contexts.clear();
  pages.clear();
});

/** Runs axe-core (all its rules for the page, or only what is inside `within`), prints the counts and fails on anything serious or critical. */
async function expectNoGraveViolations(page: Page, name: string, within?: string) {
  const builder = new AxeBuilder({ page });
  if (within) builder.include(within);
  const { violations, passes } = await builder.analyze();
  expect(passes.length, 'axe-core checked the page').toBeGreaterThan(within ? 3 : 10);
  const grave = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  const lesser = violations.filter((v) => !grave.includes(v));
  const count = (vs: typeof violations) => vs.reduce((n, v) => n + v.nodes.length, 0);
  console.log(`axe ${name}: ${count(grave)} serious/critical, ${count(lesser)} minor/moderate${lesser.length ? ` (${lesser.map((v) => v.id).join(', ')})` : ''}`);
  const listing = grave.map((v) => `${v.impact} ${v.id}: ${v.help}\n${v.nodes.map((n) => `    ${n.target.join(' ')}  ${n.failureSummary?.split('\n').slice(1).join(' ') ?? ''}`).join('\n')}`).join('\n');
  expect(grave, `serious or critical violations on ${name}:\n${listing}`).toEqual([]);
}

for (const main of mainPages) {
  test(`when axe-core reads the ${main.name} page, then it finds no serious or critical violation`, async ({ browser }) => {
    const page = await pageFor(browser, main.role);
    await open(page, main);
    await expectNoGraveViolations(page, main.name);
  });
}

/**
 * The focused element, described for messages, and whether its focus can be seen: an outline or a
 * box-shadow ring on it, of which at least one colour stands 3:1 against what lies around the
 * element (WCAG 1.4.11 Non-text Contrast; a two-colour ring is technique C40).
 */
async function focusState(page: Page) {
  return page.evaluate(() => {
    const el = document.activeElement as HTMLElement | null;
    if (!el || el === document.body) return { what: 'nothing (the page body)', ring: false, contrast: 0, keyboardFocus: false };
    type Rgba = [number, number, number, number];
    const parse = (c: string): Rgba | null => {
      const m = c.match(/rgba?\(([^)]+)\)/);
      if (!m) return null;
      const [r, g, b, a = 1] = m[1].split(/[\s,/]+/).filter(Boolean).map(Number);
      return [r, g, b, a];
    };
    const luminance = ([r, g, b]: Rgba) => {
      const lin = (v: number) => ((v /= 255) <= 0.03928 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4);
      return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
    };
    const ratio = (a: Rgba, b: Rgba) => {
      const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
      return (hi + 0.05) / (lo + 0.05);
    };
    // What lies around the element: the ancestors' backgrounds, see-through ones laid over those below.
    const layers: Rgba[] = [];
    for (let n = el.parentElement; n; n = n.parentElement) {
      const bg = parse(getComputedStyle(n).backgroundColor);
      if (bg && bg[3] > 0) layers.push(bg);
      if (bg && bg[3] >= 1) break;
    }
    let around: Rgba = [255, 255, 255, 1];
    for (const [r, g, b, a] of layers.reverse()) around = [r * a + around[0] * (1 - a), g * a + around[1] * (1 - a), b * a + around[2] * (1 - a), 1];
    const s = getComputedStyle(el);
    const colours: Rgba[] = [];
    if (s.outlineStyle !== 'none' && parseFloat(s.outlineWidth) > 0) colours.push(parse(s.outlineColor)!);
    if (s.boxShadow && s.boxShadow !== 'none') for (const c of s.boxShadow.match(/rgba?\([^)]+\)/g) ?? []) colours.push(parse(c)!);
    const seen = colours.filter((c) => c && c[3] > 0);
    const name = (el.getAttribute('aria-label') ?? (el.textContent || el.getAttribute('name') || el.getAttribute('type')) ?? '').trim().replace(/\s+/g, ' ').slice(0, 40);
    return {
      what: `${el.tagName.toLowerCase()} "${name}"`,
      ring: seen.length > 0,
      contrast: Math.max(0, ...seen.map((c) => ratio(c, around))),
      // Date and time inputs hold the focus in inner fields (the calendar button among them), which
      // :focus-visible does not always reach on the input itself.
      keyboardFocus: el.matches(':focus-visible') || el.matches('input:is([type="date"], [type="datetime-local"], [type="time"]):focus-within'),
    };
  });
}

async function expectVisibleFocus(page: Page) {
  const state = await focusState(page);
  expect(state.keyboardFocus, `${state.what} has the keyboard focus`).toBe(true);
  expect(state.ring, `${state.what} shows a focus outline or ring`).toBe(true);
  expect(state.contrast, `the focus ring on ${state.what} stands out at least 3:1`).toBeGreaterThanOrEqual(3);
}

/** Presses Tab until the target has the focus, checking on the way that every stop shows a focus ring. */
async function tabTo(page: Page, target: Locator, limit = 60) {
  for (let i = 0; i < limit; i++) {
    await page.keyboard.press('Tab');
    await expectVisibleFocus(page);
    if (await target.evaluate((el) => el === document.activeElement)) return;
  }
  throw new Error(`${limit} presses of Tab did not reach ${target}`);
}

test('when someone uses only the keyboard, then they sign in, open a live permit, open an action and close it with Esc, always seeing where the focus is', async ({ browser }) => {
  const context = await browser.newContext();
  const page = await context.newPage();
  try {
    await page.goto('/sign-in');
    await expect(page.getByRole('heading', { name: 'Sign in' })).toBeVisible();
    await tabTo(page, page.getByLabel('E-mail'));
    await page.keyboard.type(accounts.lead);
    await tabTo(page, page.getByLabel('Password', { exact: true }));
    await page.keyboard.type(DEMO_PASSWORD);
    await page.keyboard.press('Enter');
    await expect(page.getByTestId('who')).toBeVisible();

    const nav = page.getByRole('navigation', { name: 'Main' });
    await tabTo(page, nav.getByRole('link', { name: 'Permits', exact: true }));
    await page.keyboard.press('Enter');
    await expect(page.getByRole('heading', { name: 'Permits', level: 1 })).toBeVisible();
    const row = page.getByTestId('permit-row').filter({ has: page.locator(`a[href="/permits/${permitId}"]`) });
    await expect(row).toBeVisible();
    await tabTo(page, row.getByRole('link'));
    await page.keyboard.press('Enter');
    await expect(page).toHaveURL(new RegExp(`/permits/${permitId}$`));
    await expect(page.getByTestId('permit-summary')).toBeVisible();

    const actions = page.getByRole('list', { name: 'Actions' });
    const action = actions.getByRole('button').and(page.locator(':enabled')).first();
    await expect(action).toBeVisible();
    await tabTo(page, action, 80);
    await page.keyboard.press('Enter');
    const dialog = page.getByRole('dialog');
    await expect(dialog).toBeVisible();
    expect(await dialog.evaluate((d) => d.contains(document.activeElement)), 'the focus moves into the dialog').toBe(true);
    await expectVisibleFocus(page);
    await expectNoGraveViolations(page, 'permit-action-dialog', 'dialog');
    await page.keyboard.press('Escape');
    await expect(dialog).toBeHidden();
    await expect(action, 'the focus returns to the button that opened the dialog').toBeFocused();
  } finally {
    await context.close();
  }
});

/*
 * Targets checked at 44 × 44 CSS px (WCAG 2.5.5 Target Size, enhanced): buttons, every link in a
 * navigation landmark, every other link laid out on its own (a block, a flex item, a link styled as a
 * button), text inputs, selects and text areas, and the labels of checkboxes and radios (the label is
 * the target a thumb presses; the box inside it may be smaller). Left out, as 2.5.5 allows:
 * - links that flow inline in a sentence or a block of text ("Inline" exception: their height is
 *   set by the line of text around them), told apart by their computed display being inline;
 * - controls whose look the page leaves to the browser ("User agent control"), such as the parts of
 *   a native date picker; the input itself is still checked;
 * - the point glyphs on the pipeline schematic, which select a point to read its description: the
 *   same facts are in the glyph's title and in the list beside the strip (the isolation-point
 *   register on a pipeline page, the isolation plan on a permit page), whose controls are checked
 *   here ("Equivalent" exception);
 * - anything not rendered (hidden, or the 1 px skip link until it has the focus).
 */
async function smallTargets(page: Page) {
  return page.evaluate(() => {
    const selectors = [
      'button',
      '[role="button"]',
      'input[type="submit"], input[type="button"], input[type="reset"]',
      'a[href]',
      'input:not([type]), input[type="text"], input[type="email"], input[type="password"], input[type="search"], input[type="number"], input[type="date"], input[type="datetime-local"], input[type="time"], input[type="tel"], input[type="url"], input[type="file"]',
      'select',
      'textarea',
      'label:has(input[type="checkbox"]), label:has(input[type="radio"])',
    ];
    const seen = new Set<Element>();
    const small: string[] = [];
    for (const el of document.querySelectorAll<HTMLElement>(selectors.join(', '))) {
      if (seen.has(el)) continue;
      seen.add(el);
      // A link that flows inline with text is exempt; one laid out on its own (a block, a flex item, a button-like link) is not.
      if (el.matches('a[href]') && !el.closest('nav') && getComputedStyle(el).display === 'inline') continue;
      if (!el.checkVisibility({ visibilityProperty: true, opacityProperty: true })) continue;
      const r = el.getBoundingClientRect();
      if (r.width <= 1 && r.height <= 1) continue; // visually hidden (sr-only)
      if (r.width < 44 || r.height < 44) {
        const name = (el.getAttribute('aria-label') ?? el.textContent ?? (el as HTMLInputElement).name ?? '').trim().replace(/\s+/g, ' ').slice(0, 40);
        small.push(`${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ''} "${name}" ${Math.round(r.width)}×${Math.round(r.height)}`);
      }
    }
    return small;
  });
}

for (const size of [
  { name: 'tablet', width: 1024, height: 768 },
  { name: 'phone', width: 390, height: 844 },
]) {
  test(`on a ${size.name} (${size.width}×${size.height}), every main page fits the screen and its targets are at least 44 × 44 px`, async ({ browser }) => {
    const problems: string[] = [];
    for (const main of mainPages) {
      const page = await pageFor(browser, main.role);
      await page.setViewportSize({ width: size.width, height: size.height });
      await open(page, main);
      const { scroll, client } = await page.evaluate(() => ({ scroll: document.scrollingElement!.scrollWidth, client: document.scrollingElement!.clientWidth }));
      if (scroll > client) problems.push(`${main.name}: scrolls sideways (${scroll} px of content in ${client} px)`);
      for (const t of await smallTargets(page)) problems.push(`${main.name}: target under 44 × 44 px: ${t}`);
    }
    expect(problems, problems.join('\n')).toEqual([]);
  });
}
