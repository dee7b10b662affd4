import { mkdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { beforeAll, describe, expect, it } from 'vitest';
import { e2eApp, readyForRun, signIn } from '../helpers/e2e';

/**
 * Every screen width people use, in a real browser: the queue, a job, the capture screen of a
 * running run (simulated rig, holding at a point), the review of a submitted job, Records and the
 * audit trail, at 390, 768, 1024, 1440 and 1920 px. No page scrolls sideways; on the capture
 * screen the live numerals and the current point are on screen without scrolling. An axe-core pass
 * finds no serious or critical violation (colour contrast included) on each page in both themes.
 */
const SCREENS = path.resolve(import.meta.dirname, '../../.tmp/screens');
const AXE = createRequire(import.meta.url).resolve('axe-core/axe.min.js');

/** Common device sizes (phone, tablet portrait, tablet landscape / small laptop, laptop, desktop). */
const WIDTHS = [
  { width: 390, height: 844 },
  { width: 768, height: 1024 },
  { width: 1024, height: 768 },
  { width: 1440, height: 900 },
  { width: 1920, height: 1080 },
] as const;

const app = e2eApp({ env: { HOLD_SECONDS: '3600' }, users: ['admin', 'tech', 'lead'] });
let jobId: string;
let runId: string;
let reviewJobId: string;

beforeAll(async () => {
  // A long hold (HOLD_SECONDS above): the point stays in its hold (countdown running) for the whole test.
  const { admin, tech, lead } = app.api;
  mkdirSync(SCREENS, { recursive: true });
  jobId = await readyForRun(tech, 'PTW-88');
  const sim = await admin.post('/api/sim', { source: { leakPerMin: 0, overshoot: 0, noise: 0 }, setpoint: { value: 0 } });
  expect(sim.status).toBe(200);
  const started = await tech.post(`/api/jobs/${jobId}/runs`, { kind: 'as-found' });
  expect(started.status, JSON.stringify(started.body)).toBe(201);
  runId = started.body.id;
  // Bring the rig to the first point: it settles and starts its (long) hold.
  const first = started.body.points[0] as { targetDp: number };
  expect((await admin.post('/api/sim', { setpoint: { value: first.targetDp } })).status).toBe(200);
  const until = Date.now() + 120_000;
  let state = '';
  while (state !== 'holding' && Date.now() < until) {
    state = ((await tech.get(`/api/runs/${runId}`)).body.points[0] as { state: string }).state;
    if (state !== 'holding') await new Promise((r) => setTimeout(r, 200));
  }
  expect(state).toBe('holding');

  const records = (await lead.get('/api/records?status=submitted')).body.items as { jobId?: string; id?: string }[];
  expect(records.length).toBeGreaterThan(0);
  reviewJobId = (records[0]!.jobId ?? records[0]!.id)!;
});

async function signedIn(who: 'tech' | 'lead', theme: 'light' | 'bench'): Promise<{ context: BrowserContext; page: Page }> {
  // bypassCSP: axe-core is injected as a script tag, which the app's own policy (script-src 'self') refuses.
  const context = await app.browser.newContext({ viewport: { width: 1440, height: 900 }, bypassCSP: true });
  await context.addInitScript((t) => window.localStorage.setItem('stillpoint.theme', t), theme);
  const page = await context.newPage();
  await signIn(page, app.server.url, who);
  return { context, page };
}

interface PageCase {
  name: string;
  who: 'tech' | 'lead';
  path: () => string;
  /** Something on the page that says it has loaded. */
  ready: string;
}

const PAGES: PageCase[] = [
  { name: 'queue', who: 'tech', path: () => '/queue', ready: '[data-testid^="job-link-"]' },
  { name: 'job', who: 'tech', path: () => `/jobs/${jobId}`, ready: '[data-testid="step-preparation"]' },
  { name: 'capture', who: 'tech', path: () => `/runs/${runId}`, ready: '[data-testid="current-point"][data-state="holding"]' },
  { name: 'review', who: 'lead', path: () => `/jobs/${reviewJobId}/review`, ready: '[data-testid="review-trace"][data-mode]' },
  { name: 'records', who: 'lead', path: () => '/records', ready: 'table tbody tr' },
  { name: 'audit', who: 'lead', path: () => '/audit', ready: 'table tbody tr' },
];

async function open(page: Page, c: PageCase): Promise<void> {
  await page.goto(`${app.server.url}${c.path()}`);
  await page.locator(c.ready).first().waitFor({ timeout: 60_000 });
  // Fonts change widths: measure with the bundled faces in place.
  await page.evaluate(() => document.fonts.ready.then(() => undefined));
}

/** Waits for the layout after a resize: two animation frames (observers and re-renders run in between). */
function settled(page: Page): Promise<void> {
  return page.evaluate(() => new Promise<void>((r) => requestAnimationFrame(() => requestAnimationFrame(() => r()))));
}

/** Elements that stick out past the right edge, to name the culprit when a page scrolls sideways. */
function overflowers(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const w = window.innerWidth;
    const out: string[] = [];
    for (const el of Array.from(document.body.querySelectorAll('*'))) {
      const r = el.getBoundingClientRect();
      if (r.width > 0 && r.right > w + 0.5) {
        const id = el.getAttribute('data-testid');
        out.push(`${el.tagName.toLowerCase()}${id ? `[${id}]` : ''}.${(el.getAttribute('class') ?? '').split(' ').slice(0, 4).join('.')} right=${Math.round(r.right)}`);
      }
    }
    return out.slice(0, 8);
  });
}

async function inViewport(page: Page, selector: string): Promise<{ ok: boolean; box: unknown }> {
  return page.locator(selector).first().evaluate((el) => {
    const r = el.getBoundingClientRect();
    const box = { top: Math.round(r.top), left: Math.round(r.left), bottom: Math.round(r.bottom), right: Math.round(r.right), vw: window.innerWidth, vh: window.innerHeight };
    return { ok: r.width > 0 && r.top >= 0 && r.left >= 0 && r.bottom <= window.innerHeight && r.right <= window.innerWidth, box };
  });
}

interface AxeViolation {
  id: string;
  impact: string | null;
  help: string;
  nodes: { target: string[]; failureSummary?: string }[];
}

async function axeSerious(page: Page): Promise<string[]> {
  if (!(await page.evaluate(() => 'axe' in window))) await page.addScriptTag({ path: AXE });
  const violations = await page.evaluate(async () => {
    const w = window as unknown as { axe: { run(ctx: Document, opts: unknown): Promise<{ violations: AxeViolation[] }> } };
    const r = await w.axe.run(document, { resultTypes: ['violations'] });
    return r.violations.map((v) => ({ id: v.id, impact: v.impact, help: v.help, nodes: v.nodes.slice(0, 4).map((n) => ({ target: n.target, failureSummary: n.failureSummary })) }));
  });
  return violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .map((v) => `${v.id} (${v.impact}): ${v.help}\n${v.nodes.map((n) => `   ${n.target.join(' ')} — ${(n.failureSummary ?? '').replace(/\s+/g, ' ')}`).join('\n')}`);
}

describe('every screen width', () => {
  for (const theme of ['light', 'bench'] as const) {
    it(`no page scrolls sideways, the capture screen keeps its numerals in view, axe finds nothing serious (${theme} theme)`, { timeout: 600_000 }, async () => {
      const problems: string[] = [];
      for (const who of ['tech', 'lead'] as const) {
        const { context, page } = await signedIn(who, theme);
        try {
          for (const c of PAGES.filter((p) => p.who === who)) {
            // Loaded once at the narrowest width, then widened step by step as a window or a turned
            // tablet would be (the layout must follow a resize, not only a fresh load).
            await page.setViewportSize(WIDTHS[0]);
            await open(page, c);
            for (const size of WIDTHS) {
              await page.setViewportSize(size);
              await settled(page);
              const { scrollWidth, innerWidth } = await page.evaluate(() => ({ scrollWidth: document.documentElement.scrollWidth, innerWidth: window.innerWidth }));
              if (scrollWidth > innerWidth) problems.push(`${c.name} @${size.width} ${theme}: scrollWidth ${scrollWidth} > ${innerWidth}: ${(await overflowers(page)).join(' | ')}`);
              if (c.name === 'capture') {
                for (const sel of ['[data-testid="live-dp"]', '[data-testid="live-ma"]', '[data-testid="current-point"]', '[data-testid="hold-countdown"]', '[data-testid="current-point-state"]']) {
                  const v = await inViewport(page, sel);
                  if (!v.ok) problems.push(`capture @${size.width} ${theme}: ${sel} not in the viewport ${JSON.stringify(v.box)}`);
                }
              }
              if (c.name === 'capture' && size.width !== 390 && size.width !== 1440) await page.screenshot({ path: path.join(SCREENS, `width-${c.name}-${size.width}-${theme}.png`) });
              if (size.width === 390 || size.width === 1440) {
                await page.screenshot({ path: path.join(SCREENS, `width-${c.name}-${size.width}-${theme}.png`), fullPage: false });
                for (const v of await axeSerious(page)) problems.push(`axe ${c.name} @${size.width} ${theme}: ${v}`);
              }
            }
          }
        } finally {
          await context.close();
        }
      }
      expect(problems, problems.join('\n')).toEqual([]);
    });
  }

  it('the capture screen reads as paused everywhere; single-key shortcuts switch off, stay off after a reload, and are listed only when on', { timeout: 180_000 }, async () => {
    const { context, page } = await signedIn('tech', 'light');
    try {
      await page.setViewportSize({ width: 1440, height: 900 });
      await open(page, PAGES.find((p) => p.name === 'capture')!);
      await page.getByRole('button', { name: 'Pause' }).click();
      await page.locator('[data-testid="capture-screen"][data-run-status="paused"]').waitFor();
      await page.locator('[data-testid="current-point-state"][data-state="paused"]').waitFor();
      const card = (await page.getByTestId('current-point').textContent()) ?? '';
      expect(card).toContain('Paused');
      expect(card).not.toMatch(/Move towards the target|Approaching|Holding/);
      expect(await page.getByTestId('point-row-0').textContent()).toContain('Paused');
      await page.screenshot({ path: path.join(SCREENS, 'capture-paused-1440-light.png') });

      // Shortcuts on: listed, and S toggles the sound.
      const keys = page.getByTestId('shortcuts');
      expect(await keys.locator('kbd').count()).toBeGreaterThan(0);
      const sound = page.getByTestId('sound-toggle');
      const before = await sound.textContent();
      await page.locator('body').press('s');
      await expect.poll(() => sound.textContent()).not.toBe(before);
      // Off: nothing listed, and the key does nothing (a control key that acts at once, on the page).
      await page.getByRole('switch', { name: 'Single-key shortcuts' }).uncheck();
      await page.locator('[data-testid="shortcuts"][data-on="false"]').waitFor();
      expect(await keys.locator('kbd').count()).toBe(0);
      const off = await sound.textContent();
      await page.locator('body').press('s');
      await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
      expect(await sound.textContent()).toBe(off);
      await page.locator('body').press('p');
      await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
      expect(await page.getByTestId('capture-screen').getAttribute('data-run-status')).toBe('paused');
      // Remembered for this user in this browser.
      await page.reload();
      await page.locator('[data-testid="shortcuts"][data-on="false"]').waitFor();

      // The theme toggle names the theme it selects.
      await page.getByRole('button', { name: 'Use bench theme' }).click();
      expect(await page.evaluate(() => document.documentElement.dataset.theme)).toBe('bench');
      await page.getByRole('button', { name: 'Use light theme' }).waitFor();

      await page.getByRole('button', { name: 'Resume' }).click();
      await page.locator('[data-testid="capture-screen"][data-run-status="running"]').waitFor();
      expect(await page.getByTestId('current-point-state').getAttribute('data-state')).not.toBe('paused');
    } finally {
      await context.close();
    }
  });

  it('on a phone the navigation folds into a menu: a button with aria-expanded, Escape closes it and gives focus back', { timeout: 120_000 }, async () => {
    const { context, page } = await signedIn('lead', 'light');
    try {
      await page.setViewportSize({ width: 390, height: 844 });
      await page.goto(`${app.server.url}/queue`);
      const toggle = page.getByRole('button', { name: 'Menu' });
      await toggle.waitFor();
      expect(await toggle.getAttribute('aria-expanded')).toBe('false');
      expect(await page.getByTestId('nav-records').isVisible()).toBe(false);
      await toggle.click();
      expect(await toggle.getAttribute('aria-expanded')).toBe('true');
      // Every area of the role is reachable, Records and Audit included.
      for (const id of ['nav-queue', 'nav-records', 'nav-audit']) expect(await page.getByTestId(id).isVisible()).toBe(true);
      // Focus moves into the menu; Escape closes it and returns focus to the button.
      expect(await page.evaluate(() => document.activeElement?.getAttribute('data-testid'))).toBe('nav-queue');
      await page.keyboard.press('Escape');
      expect(await toggle.getAttribute('aria-expanded')).toBe('false');
      expect(await page.getByTestId('nav-records').isVisible()).toBe(false);
      expect(await page.evaluate(() => document.activeElement?.getAttribute('aria-controls'))).toBe('main-nav');
      // Choosing a page closes the menu.
      await toggle.click();
      await page.getByTestId('nav-records').click();
      await page.waitForURL(/\/records$/);
      await page.locator('[data-testid="menu-button"][aria-expanded="false"]').waitFor();
      // On a wide screen there is no menu button: the navigation is always shown.
      await page.setViewportSize({ width: 1440, height: 900 });
      expect(await toggle.isVisible()).toBe(false);
      expect(await page.getByTestId('nav-records').isVisible()).toBe(true);
    } finally {
      await context.close();
    }
  });
});
