import type { Page } from 'playwright-core';
import { beforeAll, describe, expect, it } from 'vitest';
import type { JobHart } from '../../shared/schemas/hart-job';
import type { Run } from '../../shared/schemas/runs';
import { e2eApp, readyForRun, signIn } from '../helpers/e2e';
import type { ApiClient } from '../helpers/test-server';

/**
 * A job on a HART transmitter, in the browser, on the simulated rig (HART_IN_JOB=on, HOLD_SECONDS=2):
 * the simulated device is linear while the register says square root in the transmitter, so the run
 * start is refused with that reason; correcting the register with a reason lets the run proceed, and
 * the capture screen shows the digital and analog errors per point; the hands-free output trim takes
 * a 0.05 mA D/A error to within 0.002 mA; an abort while the loop is fixed leaves fixed current (the
 * simulator's own state is checked).
 */
const app = e2eApp({ env: { HOLD_SECONDS: '2', HART_IN_JOB: 'on' }, users: ['admin', 'tech'] });
let admin: ApiClient;
let tech: ApiClient;

beforeAll(() => {
  ({ admin, tech } = app.api);
});

async function sim(body: unknown) {
  const r = await admin.post('/api/sim', body);
  expect(r.status, JSON.stringify(r.body)).toBe(200);
  return r.body;
}

async function numberIn(page: Page, testId: string): Promise<number> {
  const t = (await page.getByTestId(testId).first().textContent()) ?? '';
  return Number(t.replace('−', '-').replace(/[^0-9.+-]/g, ''));
}

const hartOf = async (jobId: string) => (await tech.get(`/api/jobs/${jobId}/hart`)).body as JobHart;

async function confirmOutputTrim(page: Page): Promise<void> {
  await page.getByTestId('hart-output-trim').click();
  await page.getByTestId('confirm-loop-manual').check();
  await page.getByTestId('confirm-operators-informed').check();
  await page.getByTestId('hart-trim-confirm').click();
}

describe('HART job (FT-101 on the simulated HART transmitter)', () => {
  it('blocks on the transfer function, proceeds after a reasoned correction, shows digital and analog errors, trims the output and always leaves fixed current', { timeout: 600_000 }, async () => {
    const jobId = await readyForRun(tech, 'PTW-HART-E2E');
    const rig = app.server.rig!;
    // An output stage 0.05 mA high at 4 and 20 mA; the sensor is right.
    await sim({ transmitter: { daErrorAt4Ma: 0.05, daErrorAt20Ma: 0.05, outputNoiseMa: 0.0005 } });
    const context = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const page = await context.newPage();
    const pageErrors: string[] = [];
    page.on('pageerror', (e) => pageErrors.push(e.message));
    try {
      await signIn(page, app.server.url, 'tech');
      await page.goto(`${app.server.url}/jobs/${jobId}`);
      await page.getByTestId('start-mode-check').click();
      // Refused with the reason; the preparation's HART panel shows what the start read.
      await page.getByText(/HART device disagrees with the register/).first().waitFor({ timeout: 30_000 });
      const mismatches = page.getByTestId('hart-mismatches');
      await mismatches.waitFor({ timeout: 15_000 });
      expect(await mismatches.textContent()).toContain('Transfer function: the device is set to linear, the register says square root in the transmitter');
      expect(page.url()).toMatch(/\/jobs\//);
      expect(await page.getByTestId('hart-as-found').textContent()).toContain('FT-101');

      // Correct the register with a reason.
      await page.getByTestId('hart-correct-register').click();
      await page.getByLabel('Reason').fill('DCS takes the square root; the transmitter was set linear in 2025');
      await page.getByTestId('hart-reason-submit').click();
      await page.getByTestId('hart-resolution').waitFor();
      expect(await page.getByTestId('hart-resolution').textContent()).toContain('Register corrected to the device');
      const audit = ((await admin.get('/api/audit?limit=200')).body.items as { action: string }[]).map((e) => e.action);
      expect(audit).toContain('instrument.corrected-from-device');

      // The run proceeds: the output-mode check, hands-free.
      await page.getByTestId('start-mode-check').click();
      await page.waitForURL(/\/runs\/[0-9a-f-]+$/, { timeout: 30_000 });
      const runId = page.url().split('/').pop()!;
      await sim({ autopilot: { speed: 4 } });
      await page.locator('[data-testid="capture-screen"][data-run-status="complete"]').waitFor({ timeout: 180_000 });
      await page.getByTestId('hart-errors').waitFor({ timeout: 15_000 });
      const run = (await tech.get(`/api/runs/${runId}`)).body as Run;
      const captured = run.points.filter((p) => p.capture?.hart);
      expect(captured.length).toBe(run.points.length);
      for (const p of captured) {
        const h = p.capture!.hart!;
        expect(h.analogErrorMa).toBeGreaterThan(0.04);
        expect(h.analogErrorMa).toBeLessThan(0.06);
        expect(Math.abs(h.digitalErrorPctSpan)).toBeLessThan(0.3);
        expect(await numberIn(page, `hart-analog-${p.index}`)).toBeCloseTo(h.analogErrorMa, 4);
        expect(await numberIn(page, `hart-digital-${p.index}`)).toBeCloseTo(h.digitalErrorPctSpan, 3);
      }

      // Output trim, hands-free, from the trims step.
      await page.goto(`${app.server.url}/jobs/${jobId}`);
      await confirmOutputTrim(page);
      await page.getByTestId('loop-current-fixed').waitFor({ timeout: 30_000 });
      await expect.poll(async () => (await hartOf(jobId)).trims.at(-1)?.status, { timeout: 120_000, interval: 250 }).toBe('done');
      await page.getByTestId('loop-current-fixed').waitFor({ state: 'detached', timeout: 15_000 });
      const done = (await hartOf(jobId)).trims.at(-1)!;
      expect(done.readings.filter((r) => r.stage === 'trim')[0]!.errorMa).toBeGreaterThan(0.045);
      const verify = done.readings.filter((r) => r.stage === 'verify');
      expect(verify.map((r) => r.fixedMa)).toEqual([4, 12, 20]);
      for (const v of verify) expect(Math.abs(v.errorMa)).toBeLessThan(0.002);
      // The simulator's own state: the output stage's corrections now cancel the D/A error, and the loop is free.
      const state = rig.snapshot().hart;
      expect(state.trim.fixedMa).toBeNull();
      expect(Math.abs(state.trim.loopAt4Ma - 0.05)).toBeLessThan(0.002);
      expect(Math.abs(state.trim.loopAt20Ma - 0.05)).toBeLessThan(0.002);
      expect(Math.abs(rig.readLoopCurrent() - rig.hart.link.read().commandedMa)).toBeLessThan(0.002);
      await page.getByTestId('hart-trim-reading-verify-12').waitFor();

      // Abort while the loop is fixed: the device leaves fixed current.
      await confirmOutputTrim(page);
      await page.getByTestId('loop-current-fixed').waitFor({ timeout: 30_000 });
      await expect.poll(() => rig.snapshot().hart.trim.fixedMa, { timeout: 15_000, interval: 100 }).not.toBeNull();
      await page.getByTestId('hart-trim-abort').click();
      await page.getByTestId('loop-current-fixed').waitFor({ state: 'detached', timeout: 30_000 });
      expect(rig.snapshot().hart.trim.fixedMa).toBeNull();
      const aborted = (await hartOf(jobId)).trims.at(-1)!;
      expect(aborted.status).toBe('aborted');
      expect((await hartOf(jobId)).writes.at(-1)).toMatchObject({ command: 40, value: '0 mA (leave fixed current)', outcome: 'ok' });

      // At 390 px (a phone, a tablet in a panel): the HART panels fit the page, and units read as written.
      await page.setViewportSize({ width: 390, height: 844 });
      await page.goto(`${app.server.url}/jobs/${jobId}`);
      await page.getByTestId('hart-trim-reading-verify-12').first().waitFor();
      // Nothing spills out of its box (outside the frames that scroll on purpose, such as the step rail).
      const wide = await page.evaluate(() =>
        Array.from(document.querySelectorAll('main *'))
          .filter((e) => {
            if (e.scrollWidth <= e.clientWidth + 1 || getComputedStyle(e).overflowX !== 'visible' || e.classList.contains('sr-only')) return false;
            for (let a = e.parentElement; a && a !== document.body; a = a.parentElement) if (getComputedStyle(a).overflowX !== 'visible') return false;
            return true;
          })
          .slice(-5)
          .map((e) => `${e.tagName.toLowerCase()}.${e.className} "${(e.textContent ?? '').slice(0, 40)}" ${e.scrollWidth} px in ${e.clientWidth}`),
      );
      if (process.env.E2E_SHOTS) await page.screenshot({ path: `${process.env.E2E_SHOTS}/job-390.png` });
      expect(wide).toEqual([]);
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390);
      for (const id of ['hart-panel', 'hart-trim-panel']) {
        const panel = page.getByTestId(id);
        const box = (await panel.boundingBox())!;
        expect(box.x + box.width, `${id} ends inside the page`).toBeLessThanOrEqual(390);
        const text = await panel.innerText();
        expect(text, id).not.toMatch(/\bMA\b|INH|K=2|−0(?![.0-9])/);
        if (process.env.E2E_SHOTS) await panel.screenshot({ path: `${process.env.E2E_SHOTS}/${id}-390.png` });
      }
      expect(await page.getByTestId('hart-trim-panel').innerText()).toContain('mA');
      expect(pageErrors).toEqual([]);
    } finally {
      await context.close();
    }
  });
});
