/**
 * Review page figures: a one-hour run (two channels at 10 readings/s each = 72 000 samples,
 * written straight into a booted server's own PGlite) is opened on the review page in Chromium,
 * and the time from the in-app navigation (a click on the record's Review link) to the trace
 * chart drawn (uPlot's first draw with data, marked `review-trace-drawn`) is measured. Also: the
 * same from a cold page load, and the server time of the whole-run trace request.
 * Run: `npx tsx perf/review.bench.ts`, or through `npm run bench`.
 */
import { isMainModule, type BenchFigure } from './figure';
import { boot } from '../server/boot';
import { instrumentRepository, standardRepository } from '../server/db/repositories/register.repository';
import { reviewRepository } from '../server/db/repositories/review.repository';
import { userRepository } from '../server/db/repositories/user.repository';
import { parseEnv } from '../server/env';
import { createLogger } from '../server/logger';
import { recordCompletedRun } from '../server/demo/demo-history';
import { launchBrowser } from '../tests/helpers/browser';
import setupE2e from '../tests/e2e/global-setup';

const TARGET_MS = 300;
const ROUNDS = 9;
const DOMAIN = 'stillpoint-demo.test';
const PASSWORD = 'stillpoint-demo';

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

export async function run(): Promise<BenchFigure[]> {
  setupE2e(); // Chromium present and the client built.
  const env = parseEnv({ NODE_ENV: 'test', PORT: '0', HOST: '127.0.0.1', LOG_LEVEL: 'silent', DATA_DIR: '.tmp/unused' });
  const srv = await boot({ env, logger: createLogger('silent'), memory: true });
  const browser = await launchBrowser();
  try {
    const db = srv.database.db;
    const inst = (await instrumentRepository(db).findByTag('FT-102'))!;
    const stds = standardRepository(db);
    const tech = (await userRepository(db).findByEmail(`tech@${DOMAIN}`))!;
    const lead = (await userRepository(db).findByEmail(`lead@${DOMAIN}`))!;
    const job = await reviewRepository(db).insertJob({ instrumentId: inst.id, status: 'submitted', assigneeId: tech.id, createdBy: lead.id, dueOn: '2030-01-01', revision: 1 });
    // Nine points × (60 s approach + 40 s settle + 300 s hold) = 3600 s at 10 readings/s per channel.
    const written = await recordCompletedRun(db, {
      jobId: job.id,
      kind: 'as-found',
      instrument: inst,
      pressureStandard: (await stds.findBySerial('QDU-PC-0417'))!,
      currentStandard: (await stds.findBySerial('QDU-MM-0031'))!,
      errorsPctSpan: [0.05, 0.08, 0.1, 0.12, 0.15, 0.13, 0.1, 0.07, 0.04],
      startedAt: new Date(Date.now() - 2 * 3600_000),
      startedBy: tech.id,
      holdSeconds: 300,
      trace: { hz: 10, seqBase: 5_000_000_000_000, approachSeconds: 60, settleSeconds: 40, seed: 7 },
    });
    if (written.samples !== 72_000) throw new Error(`expected 72 000 samples, wrote ${written.samples}`);

    // Server time of the whole-run trace (envelope) request, median of several.
    const context = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const page = await context.newPage();
    await page.goto(`${srv.url}/login`);
    await page.getByLabel('Email').fill(`lead@${DOMAIN}`);
    await page.getByLabel('Password').fill(PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByTestId('nav-queue').waitFor();
    const cookie = (await context.cookies()).map((c) => `${c.name}=${c.value}`).join('; ');
    // In-app navigation: Records page loaded, then a click on Review → chart drawn.
    const nav: number[] = [];
    for (let i = 0; i < ROUNDS; i++) {
      await page.goto(`${srv.url}/records`);
      const link = page.locator(`a[href="/jobs/${job.id}/review"]`);
      await link.waitFor();
      // The lead reads the list for a moment (the page's own start-up work — live stream replay — settles).
      await page.waitForLoadState('networkidle');
      await page.waitForTimeout(1000);
      await page.evaluate((href) => {
        (window as unknown as { __t0: number }).__t0 = performance.now();
        (document.querySelector(`a[href="${href}"]`) as HTMLAnchorElement).click();
      }, `/jobs/${job.id}/review`);
      await page.waitForSelector('[data-testid="review-trace"][data-drawn="true"]', { timeout: 30_000 });
      if (process.env.REVIEW_BENCH_DEBUG) console.error(await page.evaluate(() => { const t0 = (window as unknown as { __t0: number }).__t0; return performance.getEntriesByType('resource').filter((e) => e.startTime >= t0).concat(performance.getEntriesByType('mark').filter((e) => e.startTime >= t0)).map((e) => `${e.name.replace(/^https?:\/\/[^/]+/, '')} ${Math.round(e.startTime - t0)}→${Math.round(((e as PerformanceResourceTiming).responseEnd ?? e.startTime) - t0)}`).join('\n'); }));
      nav.push(
        await page.evaluate(() => {
          const m = performance.getEntriesByName('review-trace-drawn').at(-1)!;
          return m.startTime - (window as unknown as { __t0: number }).__t0;
        }),
      );
    }

    const api: number[] = [];
    let envelopeBytes = 0;
    for (let i = 0; i < ROUNDS; i++) {
      const t = performance.now();
      const res = await fetch(`${srv.url}/api/review/runs/${written.runId}/trace`, { headers: { cookie } });
      envelopeBytes = (await res.arrayBuffer()).byteLength;
      api.push(performance.now() - t);
    }

    // Cold page load of the review URL (bundle, session check, record, run and trace) → chart drawn.
    const cold: number[] = [];
    for (let i = 0; i < ROUNDS; i++) {
      await page.goto(`${srv.url}/jobs/${job.id}/review`);
      await page.waitForSelector('[data-testid="review-trace"][data-drawn="true"]', { timeout: 30_000 });
      cold.push(await page.evaluate(() => performance.getEntriesByName('review-trace-drawn').at(-1)!.startTime));
    }
    await context.close();

    // The first open computes the run's envelope in the database; later opens find it kept.
    const first = nav[0]!;
    const navMs = median(nav.slice(1));
    return [
      { name: `review: one-hour run opened from Records, click → trace drawn (median of ${nav.length - 1})`, value: Math.round(navMs), unit: 'ms', target: `< ${TARGET_MS} ms`, ok: navMs < TARGET_MS },
      { name: 'review: very first open of that run (envelope computed on demand)', value: Math.round(first), unit: 'ms' },
      { name: 'review: cold page load of the review URL → trace drawn (median)', value: Math.round(median(cold)), unit: 'ms' },
      { name: 'review: whole-run trace request, server round trip (median)', value: Math.round(median(api)), unit: 'ms' },
      { name: 'review: whole-run trace reply size (min/mean/max envelope)', value: Math.round(envelopeBytes / 1024), unit: 'KiB' },
      { name: 'review: samples in the one-hour run', value: written.samples, unit: 'samples' },
    ];
  } finally {
    await browser.close();
    await srv.close();
  }
}

if (isMainModule(import.meta.url)) {
  console.table(await run());
}
