import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../helpers/browser';
import { ApiClient, demoEmail, DEMO_PASSWORD, startTestServer, type TestServer } from '../helpers/test-server';

/**
 * Web Serial: a fake `navigator.serial` whose two ports are a tiny in-page rig — a calibrator
 * answering `DP?` with `DP <value> inH2O@68F` (the bundled calibrator profile) and a meter
 * answering the SCPI `READ?` in amperes, fed by a transmitter with the root inside. The browser
 * reads both with the shared protocol code and forwards the lines; the server captures a point.
 */
let server: TestServer;
let browser: Browser;
let tech: ApiClient;
let jobId: string;

/** Runs in the page before any script: the emulated bench behind navigator.serial. */
function installFakeSerial() {
  const rig = { dp: 0, target: 0, lastMs: performance.now() };
  const step = () => {
    const now = performance.now();
    const dt = (now - rig.lastMs) / 1000;
    rig.lastMs = now;
    rig.dp += (rig.target - rig.dp) * (1 - Math.exp(-dt / 0.8));
    if (Math.abs(rig.target - rig.dp) < 0.002) rig.dp = rig.target;
  };
  const currentMa = () => {
    const x = Math.max(0, rig.dp / 100);
    const flow = Math.sqrt(x) * 100 < 6 ? 0 : Math.sqrt(x);
    return 4 + 16 * flow;
  };
  const scpi = (amps: number) => {
    const [m, e] = Math.abs(amps).toExponential(6).split('e') as [string, string];
    const n = Number(e);
    return `${amps < 0 ? '-' : '+'}${m}E${n < 0 ? '-' : '+'}${String(Math.abs(n)).padStart(2, '0')}`;
  };
  const makePort = (answer: (cmd: string) => string | null) => {
    let push: ((b: Uint8Array) => void) | null = null;
    let buffer = '';
    const enc = new TextEncoder();
    const dec = new TextDecoder();
    const port = {
      readable: null as ReadableStream<Uint8Array> | null,
      writable: null as WritableStream<Uint8Array> | null,
      async open() {
        port.readable = new ReadableStream<Uint8Array>({ start: (c) => void (push = (b) => c.enqueue(b)) });
        port.writable = new WritableStream<Uint8Array>({
          write: (chunk) => {
            buffer += dec.decode(chunk);
            let i: number;
            while ((i = buffer.search(/\r?\n/)) >= 0) {
              const cmd = buffer.slice(0, i).trim();
              buffer = buffer.slice(buffer[i] === '\r' ? i + 2 : i + 1);
              step();
              const reply = answer(cmd);
              if (reply !== null) setTimeout(() => push?.(enc.encode(reply)), 3);
            }
          },
        });
      },
      async close() {},
      getInfo: () => ({ usbVendorId: 0x1209, usbProductId: 0x0001 }),
    };
    return port;
  };
  const calibrator = makePort((cmd) => (cmd === 'DP?' ? `DP ${rig.dp >= 0 ? '+' : ''}${rig.dp.toFixed(5)} inH2O@68F\r\n` : null));
  const meter = makePort((cmd) => (cmd === 'READ?' ? `${scpi(currentMa() / 1000)}\n` : cmd === '*IDN?' ? 'SIMDMM,BENCH-1,0001,1.0\n' : null));
  const queue = [calibrator, meter];
  Object.defineProperty(navigator, 'serial', { value: { requestPort: async () => queue.shift() ?? calibrator }, configurable: true });
  (window as unknown as { __rig: { set(v: number): void; get(): number } }).__rig = { set: (v) => void (rig.target = v), get: () => rig.dp };
}

beforeAll(async () => {
  server = await startTestServer({ env: { HOLD_SECONDS: '2' } });
  browser = await launchBrowser();
  tech = new ApiClient(server.url);
  await tech.login(demoEmail('tech'));
  const job = (await tech.get('/api/jobs')).body.items.find((j: { tag: string }) => j.tag === 'FT-101');
  jobId = job.id;
  const stds = (await tech.get('/api/standards')).body.items.filter((s: { dueState: string }) => s.dueState !== 'expired');
  const p = stds.find((s: { kind: string; rangeMax: number }) => s.kind === 'pressure' && s.rangeMax <= 100);
  const c = stds.find((s: { kind: string }) => s.kind === 'current');
  await tech.req('PUT', `/api/jobs/${jobId}/checklist`, { standardIds: [p.id, c.id], permitNo: 'PTW-WS', bypass: { required: false, description: '' }, operatorsInformed: true, isolated: true, vented: true });
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('Web Serial', () => {
  it('reads both instruments in the browser and completes a point through the forwarded lines', { timeout: 240_000 }, async () => {
    const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    await context.addInitScript(installFakeSerial);
    const page = await context.newPage();
    const pageErrors: string[] = [];
    page.on('pageerror', (e) => pageErrors.push(e.message));
    try {
      await page.goto(`${server.url}/login`);
      await page.getByLabel('Email').fill(demoEmail('tech'));
      await page.getByLabel('Password').fill(DEMO_PASSWORD);
      await page.getByRole('button', { name: 'Sign in' }).click();
      await page.waitForURL(/\/queue$/);
      await page.getByTestId('nav-bench').click();
      await page.getByTestId('web-serial').waitFor();
      await page.getByTestId('web-serial-connect-pressure').click();
      await page.locator('[data-testid="web-serial-pressure"][data-connected="true"]').waitFor();
      await page.getByTestId('web-serial-connect-current').click();
      await page.locator('[data-testid="web-serial-current"][data-connected="true"]').waitFor();
      const benchId = (await page.getByTestId('browser-bench-id').textContent())!;
      expect(benchId).toMatch(/^browser-/);
      // Decoded in the browser with the shared protocol code: 0 inH2O and 4 mA at rest.
      await expect.poll(async () => Number(await page.getByTestId('web-serial-value-current').textContent().then((t) => t?.replace(/[^0-9.]/g, '')))).toBeCloseTo(4, 2);
      // The server hub sees the browser's bench.
      await expect.poll(async () => (await tech.get('/api/bench')).body.benches.some((b: { benchId: string }) => b.benchId === benchId)).toBe(true);

      // Client-side navigation keeps the ports open: to the job, and a run on the browser's bench.
      await page.getByTestId('nav-queue').click();
      await page.getByTestId('job-link-FT-101').click();
      await page.getByTestId('browser-bench-note').waitFor();
      await page.getByTestId('start-mode-check').click();
      await page.waitForURL(/\/runs\/[0-9a-f-]+$/);
      const runId = page.url().split('/').pop()!;
      await page.locator('[data-testid="stream-status"][data-status="open"]').waitFor();
      // The technician at the pump: up to 25 % DP from below.
      await page.evaluate(() => (window as unknown as { __rig: { set(v: number): void } }).__rig.set(25));
      await page.locator('[data-testid="capture-screen"][data-run-status="complete"]').waitFor({ timeout: 120_000 });
      const run = (await tech.get(`/api/runs/${runId}`)).body;
      expect(run.benchId).toBe(benchId);
      expect(run.points[0].state).toBe('captured');
      expect(run.points[0].capture.appliedDp).toBeCloseTo(25, 1);
      expect(run.points[0].capture.measuredMa).toBeCloseTo(12, 2);
      expect(run.modeCheck).toMatchObject({ finding: 'root-in-transmitter', matchesRegister: true });
      expect(await page.getByTestId('mode-check-finding').getAttribute('data-matches')).toBe('true');
      expect(pageErrors).toEqual([]);
    } finally {
      await context.close();
    }
  });
});
