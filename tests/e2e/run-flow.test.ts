import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { beforeAll, describe, expect, it } from 'vitest';
import { recordOffHostRequests } from '../helpers/browser';
import { AUTOPILOT_SPEED, e2eApp, signIn } from '../helpers/e2e';
import type { ApiClient } from '../helpers/test-server';

/**
 * The whole job in the browser, hands-free on the simulated rig (HOLD_SECONDS=2, autopilot):
 * prepare FT-101 (square root in the transmitter), output-mode check, as-found with the sim
 * transmitter out of tolerance, lower and span trims, as-left in tolerance, return to service,
 * submit. Values and decisions on screen are checked against GET /api/runs/:id.
 */
const SCREENS = path.resolve(import.meta.dirname, '../../.tmp/screens');

const app = e2eApp({ env: { HOLD_SECONDS: '2' }, users: ['admin', 'tech'] });
let admin: ApiClient;
let tech: ApiClient;

beforeAll(() => {
  ({ admin, tech } = app.api);
  mkdirSync(SCREENS, { recursive: true });
});

async function sim(body: unknown) {
  const r = await admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body;
}

/** Text of a numeral on screen as a number (our minus sign is U+2212). */
/** The number shown in an element, once it shows one (results arrive with the run's last refetch). */
async function numberIn(page: Page, testId: string, timeoutMs = 15_000): Promise<number> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const t = (await page.getByTestId(testId).first().textContent()) ?? '';
    if (/\d/.test(t) || Date.now() > until) return Number(t.replace('−', '-').replace(/[^0-9.+-]/g, ''));
    await page.waitForTimeout(100);
  }
}

/** Starts a run from the job page, drives it with the autopilot, waits for it to complete. */
async function runHandsFree(page: Page, startTestId: string, timeoutMs = 240_000): Promise<string> {
  await page.getByTestId(startTestId).click();
  await page.waitForURL(/\/runs\/[0-9a-f-]+$/);
  const runId = page.url().split('/').pop()!;
  await page.getByTestId('capture-screen').waitFor();
  // A one-point trim run can be captured hands-free before the autopilot starts (the pump still sits
  // at the point the previous run ended on); then there is no active run left to drive.
  const r = await admin.post('/api/sim', { autopilot: { speed: AUTOPILOT_SPEED } });
  if (r.status !== 200) expect((await tech.get(`/api/runs/${runId}`)).body.status, JSON.stringify(r.body)).toBe('complete');
  await untilComplete(page, runId, timeoutMs);
  return runId;
}

/**
 * Waits for the capture screen to show the run complete. On a timeout the error says where the run,
 * the page and the rig stood (a bare locator timeout told CI nothing about which of them was stuck).
 */
async function untilComplete(page: Page, runId: string, timeoutMs: number): Promise<void> {
  try {
    await page.locator('[data-testid="capture-screen"][data-run-status="complete"]').waitFor({ timeout: timeoutMs });
  } catch (e) {
    const run = await tech.get(`/api/runs/${runId}`);
    const rig = await admin.get('/api/sim');
    const shown = await page.getByTestId('capture-screen').getAttribute('data-run-status').catch(() => 'no capture screen');
    const body = run.body as { status?: string; currentIndex?: number; points?: { index: number; state: string; warning?: string | null }[] };
    throw new Error(
      `run ${runId} not shown complete within ${timeoutMs} ms: page shows ${shown}, server says ${run.status} ${body.status} at point ${body.currentIndex} ` +
        `(${JSON.stringify(body.points?.map((p) => [p.index, p.state, p.warning ?? null]))}); rig ${JSON.stringify(rig.body)}; ${(e as Error).message.split('\n')[0]}`,
      { cause: e },
    );
  }
}

async function runJson(runId: string) {
  const r = await tech.get(`/api/runs/${runId}`);
  expect(r.status).toBe(200);
  return r.body as {
    status: string;
    points: { index: number; state: string; capture: { measuredMa: number } | null }[];
    results: { points: { index: number; measuredMa: number; errorPctSpan: number; decision: string }[]; overallDecision: string } | null;
    modeCheck: { finding: string; matchesRegister: boolean } | null;
  };
}

/** Every captured value and decision on screen equals the server's. */
async function expectResultsMatch(page: Page, runId: string) {
  const run = await runJson(runId);
  expect(run.status).toBe('complete');
  expect(run.results).not.toBeNull();
  const table = page.getByTestId('run-results');
  await table.waitFor();
  for (const p of run.results!.points) {
    expect(await numberIn(page, `result-ma-${p.index}`)).toBeCloseTo(p.measuredMa, 4);
    expect(await numberIn(page, `result-error-${p.index}`)).toBeCloseTo(p.errorPctSpan, 3);
    expect(await table.getByTestId(`result-decision-${p.index}`).getAttribute('data-decision')).toBe(p.decision);
  }
  expect(await page.getByTestId('overall-decision').first().getAttribute('data-decision')).toBe(run.results!.overallDecision);
  return run;
}

describe('run flow (FT-101, rooted output)', () => {
  it('prepares, checks the output mode, finds, trims, leaves and submits — hands-free', { timeout: 900_000 }, async () => {
    const context = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const page = await context.newPage();
    const offHost = recordOffHostRequests(page);
    const pageErrors: string[] = [];
    page.on('pageerror', (e) => pageErrors.push(e.message));
    try {
      await signIn(page, app.server.url, 'tech');
      await page.getByTestId('job-link-FT-101').click();
      await page.waitForURL(/\/jobs\/[0-9a-f-]+$/);
      const jobId = page.url().split('/').pop()!;
      const jobUrl = page.url();

      // Preparation: an expired standard is refused with the server's reason, verbatim.
      await page.getByRole('checkbox', { name: /Handheld loop meter/ }).check();
      await page.getByRole('button', { name: 'Save standards' }).click();
      await expect.poll(() => page.getByTestId('standard-problem').first().textContent(), { timeout: 15_000 }).toMatch(/^Cannot be used: calibration expired on /);
      const prep = page.getByTestId('step-preparation');
      expect(await prep.getByTestId('blockers').textContent()).toContain('Handheld loop meter (QDU-MM-0118): calibration expired on');

      await page.getByRole('checkbox', { name: /Handheld loop meter/ }).uncheck();
      await page.getByRole('checkbox', { name: /0–100 kPa module/ }).check();
      await page.getByRole('checkbox', { name: /Bench multimeter/ }).check();
      await page.getByRole('button', { name: 'Save standards' }).click();
      await expect.poll(async () => (await prep.getByTestId('blockers').textContent()) ?? '', { timeout: 15_000 }).not.toContain('Choose a pressure reference standard');
      await page.getByLabel('Permit-to-work number').fill('PTW-2291');
      await page.getByRole('button', { name: 'Record permit' }).click();
      // The bypass question has no default: answer it on purpose.
      await page.getByRole('radio', { name: 'No bypass needed' }).check();
      await page.getByRole('button', { name: 'Save', exact: true }).click();
      await page.getByTestId('bypass-unanswered').waitFor({ state: 'detached' });
      for (const ack of ['ack-operators', 'ack-isolated', 'ack-vented', 'ack-flushed']) {
        await page.getByTestId(ack).getByRole('button', { name: 'Confirm' }).click();
        await page.locator(`[data-testid="${ack}"][data-done="true"]`).waitFor();
      }
      await page.locator('[data-testid="rail-preparation"][data-status="done"]').waitFor();
      // The as-found run waits for the output-mode check.
      expect(await page.getByTestId('step-as-found').getByTestId('blockers').textContent()).toContain('Run the output-mode check first');
      await page.screenshot({ path: path.join(SCREENS, 'job-prepared-light.png'), fullPage: true });

      // Output-mode check: 25 % DP reads 12 mA — root in the transmitter, as the register says.
      const modeRunId = await runHandsFree(page, 'start-mode-check');
      const finding = page.getByTestId('mode-check-finding');
      expect(await finding.getAttribute('data-finding')).toBe('root-in-transmitter');
      expect(await finding.getAttribute('data-matches')).toBe('true');
      expect((await runJson(modeRunId)).modeCheck).toMatchObject({ finding: 'root-in-transmitter', matchesRegister: true });

      // As-found with the transmitter out of tolerance (zero error 1.5 % of span; tolerance ±0.5 %).
      await sim({ transmitter: { zeroErrorPct: 1.5, spanErrorPct: 0, outputNoiseMa: 0.001 } });
      await page.goto(jobUrl);
      await page.getByTestId('start-as-found').click();
      await page.waitForURL(/\/runs\/[0-9a-f-]+$/);
      const asFoundId = page.url().split('/').pop()!;
      await sim({ autopilot: { speed: AUTOPILOT_SPEED } });
      // The capture screen while a point holds, in both themes.
      await page.locator('[data-testid="current-point"][data-state="holding"]').waitFor({ timeout: 120_000 });
      await page.screenshot({ path: path.join(SCREENS, 'capture-holding-light.png') });
      await page.evaluate(() => document.documentElement.setAttribute('data-theme', 'bench'));
      await page.screenshot({ path: path.join(SCREENS, 'capture-holding-bench.png') });
      await page.evaluate(() => document.documentElement.setAttribute('data-theme', 'light'));
      await untilComplete(page, asFoundId, 240_000);
      const found = await expectResultsMatch(page, asFoundId);
      expect(found.results!.overallDecision).toBe('fail');
      expect(found.points.every((p) => p.state === 'captured')).toBe(true);
      await page.screenshot({ path: path.join(SCREENS, 'capture-complete-light.png'), fullPage: true });

      // Decision on the job page, then the trims of a rooted output: lower trim at 10 % flow and span trim — no zero trim.
      await page.goto(jobUrl);
      await page.getByTestId('as-found-results').waitFor();
      await page.getByTestId('error-chart').locator('canvas').waitFor();
      expect(await page.getByTestId('trim-zero-trim').count()).toBe(0);
      await page.getByTestId('trim-lower-trim').waitFor();
      const lowerBefore = await runHandsFree(page, 'start-lower-trim');
      // The "trim": the sim transmitter back in tolerance.
      await sim({ transmitter: { zeroErrorPct: 0, spanErrorPct: 0 } });
      await page.goto(jobUrl);
      const lowerAfter = await runHandsFree(page, 'start-lower-trim');
      await page.goto(jobUrl);
      const spanTrim = await runHandsFree(page, 'start-span-trim');
      await page.goto(jobUrl);
      const before = (await runJson(lowerBefore)).points[0]!.capture!.measuredMa;
      const after = (await runJson(lowerAfter)).points[0]!.capture!.measuredMa;
      expect(await numberIn(page, 'trim-before-lower-trim')).toBeCloseTo(before, 4);
      expect(await numberIn(page, 'trim-after-lower-trim')).toBeCloseTo(after, 4);
      expect(Math.abs(after - 5.6)).toBeLessThan(Math.abs(before - 5.6));
      expect((await runJson(spanTrim)).status).toBe('complete');

      // As-left: in tolerance.
      const asLeftId = await runHandsFree(page, 'start-as-left');
      const left = await expectResultsMatch(page, asLeftId);
      expect(left.results!.overallDecision).toBe('pass');

      // Both on the error chart; return to service; submit.
      await page.goto(jobUrl);
      await page.getByTestId('as-left-results').waitFor();
      // The decision step follows the state: no call for the as-left pass once it has passed.
      expect(await page.getByTestId('decision-advice').textContent()).toMatch(/as-left pass is in tolerance/);
      await page.getByTestId('ack-returned').getByRole('button', { name: 'Confirm' }).click();
      await page.locator('[data-testid="ack-returned"][data-done="true"]').waitFor();
      await page.screenshot({ path: path.join(SCREENS, 'job-done-light.png'), fullPage: true });
      await page.getByTestId('submit-job').click();
      // The confirmation lists what is submitted, the as-left decision among it.
      expect(await page.getByTestId('submit-as-left').textContent()).toMatch(/^Pass/);
      await page.getByTestId('confirm-submit').click();
      await page.getByTestId('submitted').waitFor();
      expect((await tech.get(`/api/jobs/${jobId}`)).body.status).toBe('submitted');

      expect(offHost).toEqual([]);
      expect(pageErrors).toEqual([]);
    } finally {
      await context.close();
    }
  });
});
