import { spawnSync } from 'node:child_process';
import fs from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { siteRepository } from '../../server/db/repositories/user.repository';
import { unitLabel } from '../../shared/format';
import { launchBrowser } from '../helpers/browser';
import { AUTOPILOT_SPEED } from '../helpers/e2e';
import { ApiClient, DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { completeChecklist, demoStandards } from '../integration/records-helpers';

/**
 * Units and numbers written right, and flow in engineering units (issue 13 items 4–5, issue 12
 * "flow in engineering units"), in Chromium against the real server and the simulated rig:
 *
 * - FT-101 of the demo data has an orifice primary element (ISO 5167-2) and a square-root
 *   output: an as-found run shows its flow in m³/h beside % flow on the capture screen (live, the
 *   current point, each point), in the results, on the review page and on the certificate.
 * - The instrument's unit is spelt one way on screen, in the certificate's text and in a mail.
 * - No page shows "MA" as a unit, "INH", "K=2", or a signed zero. The issue writes the last as
 *   `−0\b` and `+0\b`; a literal \b would also match "−0.041", a real value, so the check is for a
 *   signed value that is all zeros: "−0", "+0", "−0.000", "+0.00".
 */
let server: TestServer;
let browser: Browser;
let admin: ApiClient;
let tech: ApiClient;
let lead: ApiClient;
let jobId: string;
let runId: string;
let dir: string;
const scans = new Map<string, string>();

const UNIT = unitLabel('inH2O@68F');

/** What must never be on screen, as [name, pattern]. */
const FORBIDDEN: Array<[string, RegExp]> = [
  ['MA as a unit', /\bMA\b/],
  ['INH', /INH/],
  ['K=2', /K=2/],
  ['signed zero', /(?<![\w.])[\u2212+]0(?:\.0+)?(?![\d.])/],
];

function problemsIn(text: string): string[] {
  const out: string[] = [];
  for (const [name, re] of FORBIDDEN) {
    const m = re.exec(text);
    if (m) out.push(`${name}: …${text.slice(Math.max(0, m.index - 40), m.index + 40).replace(/\s+/g, ' ')}…`);
  }
  return out;
}

async function scan(page: Page, name: string): Promise<void> {
  scans.set(name, await page.evaluate(() => document.body.innerText));
}

async function sim(body: unknown) {
  const r = await admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
}

async function signIn(context: BrowserContext, who: 'tech' | 'lead' | 'admin' | 'auditor'): Promise<Page> {
  const page = await context.newPage();
  await page.goto(`${server.url}/login`);
  await page.getByLabel('Email').fill(demoEmail(who));
  await page.getByLabel('Password').fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByTestId('nav-records').or(page.getByTestId('nav-queue')).first().waitFor();
  return page;
}

/** The number at the start of an element's text (U+2212 read as a minus), once it shows one. */
async function numberIn(page: Page, testId: string): Promise<number> {
  const loc = page.getByTestId(testId).first();
  await expect.poll(async () => /\d/.test((await loc.textContent()) ?? ''), { timeout: 30_000 }).toBe(true);
  const t = ((await loc.textContent()) ?? '').replace('\u2212', '-');
  return Number(/[-+]?\d+(?:\.\d+)?/.exec(t)![0]);
}

function pdfText(file: string): string {
  const r = spawnSync('pdftotext', [file, '-'], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`pdftotext failed: ${r.stderr}`);
  return r.stdout.replace(/\s+/g, ' ');
}

beforeAll(async () => {
  server = await startTestServer({ env: { HOLD_SECONDS: '2' } });
  // The site keeps its dates in its own zone (a site setting; no HTTP route edits settings yet).
  const sites = siteRepository(server.database.db);
  const site = (await sites.get())!;
  await sites.updateSettings(site.id, JSON.stringify({ ...JSON.parse(site.settings ?? '{}'), timeZone: 'Europe/London' }));
  admin = new ApiClient(server.url);
  await admin.login(demoEmail('admin'));
  tech = new ApiClient(server.url);
  await tech.login(demoEmail('tech'));
  lead = new ApiClient(server.url);
  await lead.login(demoEmail('lead'));
  const jobs = (await tech.get('/api/jobs')).body.items as Array<{ id: string; tag: string; status: string }>;
  jobId = jobs.find((j) => j.tag === 'FT-101' && j.status !== 'approved')!.id;
  const s = await demoStandards(server);
  await completeChecklist(tech, jobId, [s.pressure.id, s.current.id]);
  browser = await launchBrowser();
  dir = await fs.mkdtemp(path.join(os.tmpdir(), 'stillpoint-units-'));
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
  if (dir) await fs.rm(dir, { recursive: true, force: true });
});

describe('flow in engineering units on an orifice-element instrument (FT-101)', () => {
  it('shows flow in m³/h on the capture screen, the results, the review and the certificate; one unit spelling on screen, certificate and mail', { timeout: 900_000 }, async () => {
    const errors: string[] = [];
    let jobText: string | undefined;
    const context = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await signIn(context, 'tech');
      page.on('pageerror', (e) => errors.push(e.message));
      await page.goto(`${server.url}/jobs/${jobId}`);
      await page.getByText(`0–100 ${UNIT}`).first().waitFor({ timeout: 30_000 });
      await scan(page, 'job');
      // The output-mode check first (the as-found waits for it), hands-free.
      await page.getByTestId('start-mode-check').click();
      await page.waitForURL(/\/runs\/[0-9a-f-]+$/);
      await page.getByTestId('capture-screen').waitFor();
      await sim({ autopilot: { speed: AUTOPILOT_SPEED } });
      await page.locator('[data-testid="capture-screen"][data-run-status="complete"]').waitFor({ timeout: 240_000 });

      await page.goto(`${server.url}/jobs/${jobId}`);
      await page.getByTestId('start-as-found').click();
      await page.waitForURL(/\/runs\/[0-9a-f-]+$/);
      runId = page.url().split('/').pop()!;
      await page.getByTestId('capture-screen').waitFor();
      await sim({ autopilot: { speed: AUTOPILOT_SPEED } });

      // Live: the flow at the DP applied, in the element's unit, beside % flow.
      await expect.poll(async () => (await page.getByTestId('live-flow-eng').textContent()) ?? '', { timeout: 60_000 }).toMatch(/^\d+(\.\d+)? m³\/h$/);
      await expect.poll(async () => (await page.getByTestId('target-flow').textContent()) ?? '', { timeout: 30_000 }).toMatch(/^\d+(\.\d+)? m³\/h$/);
      // Per point: each point's flow (the target's, then the evaluated one once captured).
      expect(await page.getByTestId('point-flow-0').textContent()).toMatch(/^\d+(\.\d+)? m³\/h$/);
      // The capture screen of a running run, scanned once a point is captured.
      await page.locator('[data-testid="point-row-0"][data-state="captured"]').waitFor({ timeout: 120_000 });
      expect(await page.locator('[data-testid="capture-screen"]').getAttribute('data-run-status')).toMatch(/running|paused/);
      await scan(page, 'capture (running)');
      const screenUnit = (await page.locator('[aria-label="Live readings"]').innerText()).includes(UNIT);
      expect(screenUnit, `the live DP readout spells its unit "${UNIT}"`).toBe(true);

      await page.locator('[data-testid="capture-screen"][data-run-status="complete"]').waitFor({ timeout: 300_000 });
      // Results: the evaluated flow of each point, as the API stored it.
      const run = (await tech.get(`/api/runs/${runId}`)).body as { results: { points: Array<{ index: number; flow: { flow: number; unit: string; pureRootDeparturePct: number | null } | null }> } };
      const flows = run.results.points.map((p) => p.flow);
      expect(flows.every((f) => f && f.unit === 'm3/h' && f.flow > 0)).toBe(true);
      // At the low-flow end the constant-C root departs from ISO 5167-2 more than at full flow.
      const low = run.results.points.reduce((a, b) => (b.flow!.flow < a.flow!.flow ? b : a));
      const high = run.results.points.reduce((a, b) => (b.flow!.flow > a.flow!.flow ? b : a));
      expect(Math.abs(low.flow!.pureRootDeparturePct!)).toBeGreaterThan(Math.abs(high.flow!.pureRootDeparturePct!));
      await page.getByTestId('run-results').waitFor();
      for (const p of run.results.points) expect(await numberIn(page, `result-flow-${p.index}`)).toBeCloseTo(p.flow!.flow, 1);
      expect(await page.getByTestId('run-results').innerText()).toContain('m³/h');

      const submit = await tech.post(`/api/jobs/${jobId}/submit`);
      expect(submit.status, JSON.stringify(submit.body)).toBe(200);
      await page.goto(`${server.url}/jobs/${jobId}`);
      await page.getByTestId('submitted').waitFor();
      // The instrument line comes from its own query: under load it can arrive after the job's.
      await page.getByText(`0–100 ${UNIT}`).first().waitFor({ timeout: 30_000 });
      await scan(page, 'job (submitted)');
      jobText = await page.evaluate(() => document.body.innerText);
      expect(jobText).toContain(`0–100 ${UNIT}`);

      // Review: the lead sees each point's flow in engineering units.
      const leadContext = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
      try {
        const lp = await signIn(leadContext, 'lead');
        lp.on('pageerror', (e) => errors.push(e.message));
        await lp.goto(`${server.url}/jobs/${jobId}/review`);
        await lp.getByTestId(`review-flow-${run.results.points[0]!.index}`).waitFor({ timeout: 30_000 });
        for (const p of run.results.points) expect(await numberIn(lp, `review-flow-${p.index}`)).toBeCloseTo(p.flow!.flow, 1);
        await scan(lp, 'review');
        expect(scans.get('review')).toContain(UNIT);
      } finally {
        await leadContext.close();
      }
    } finally {
      await context.close();
    }

    // Certificate (draft, from the submitted record): the flow table and the unit spelt the same.
    const res = await fetch(`${server.url}/api/jobs/${jobId}/certificate.pdf`, { headers: { cookie: lead.cookie } });
    expect(res.status).toBe(200);
    const file = path.join(dir, 'cert.pdf');
    await fs.writeFile(file, Buffer.from(await res.arrayBuffer()));
    const cert = pdfText(file);
    expect(cert).toContain('Flow in engineering units (m³/h) from the orifice primary element by ISO 5167-2:2003');
    expect(cert).toContain('Constant-C root departure %');
    expect(cert).toContain(`0.00 to 100.00 ${UNIT}`);
    expect(problemsIn(cert)).toEqual([]);

    // Mail: the submission to the leads names the range in the same spelling.
    let mailText = '';
    await expect
      .poll(
        async () => {
          const items = (await admin.get('/api/outbox')).body.items as Array<{ id: string; subject: string; to: string[] }>;
          const m = items.find((x) => x.subject === 'Ready for review: FT-101' && x.to.includes(demoEmail('lead')));
          if (m) mailText = ((await admin.get(`/api/outbox/${m.id}`)).body as { text: string }).text;
          return mailText;
        },
        { timeout: 30_000 },
      )
      .toContain(`0–100 ${UNIT}`);

    // One spelling: the same label in all three, and none of the other spellings anywhere.
    for (const [where, text] of [['screen', `${scans.get('capture (running)')}\n${jobText ?? ''}`], ['certificate', cert], ['mail', mailText]] as const) {
      expect(text, where).toContain(UNIT);
      expect(text, where).not.toMatch(/inH2O@68F|INH2O|inH₂O|inH2O at 68 F\b/);
    }
    expect(errors).toEqual([]);
  });

  it('shows no "MA", "INH", "K=2" or signed zero on the main pages', { timeout: 300_000 }, async () => {
    const context = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await signIn(context, 'lead');
      const visit = async (name: string, url: string, ready: string) => {
        await page.goto(`${server.url}${url}`);
        await page.locator(ready).first().waitFor({ timeout: 30_000 });
        await scan(page, name);
      };
      await visit('queue', '/queue', 'h1');
      await visit('job (lead)', `/jobs/${jobId}`, `text=0–100 ${UNIT}`);
      await visit('review (lead)', `/jobs/${jobId}/review`, `[data-testid^="review-flow-"]`);
      await visit('records', '/records', 'table tbody tr');
      await visit('audit', '/audit', 'table tbody tr');
      await visit('standards', '/standards', 'table tbody tr');
      await visit('instruments', '/instruments', 'table tbody tr');
    } finally {
      await context.close();
    }
    for (const name of ['job', 'capture (running)', 'review', 'queue', 'records', 'audit', 'standards']) expect(scans.has(name), name).toBe(true);
    const found = [...scans].flatMap(([name, text]) => problemsIn(text).map((p) => `${name}: ${p}`));
    expect(found).toEqual([]);
  });
});
