/**
 * Throughput of the incremental hold analysis (shared/calc HoldAnalyzer) on one core.
 * Run: `npx tsx perf/calc.bench.ts`. Exports `run()` for an aggregating bench runner.
 */
import { isMainModule, type BenchFigure } from './figure';
import { HoldAnalyzer } from '../shared/calc';

const SAMPLES = 6_000_000;
const TARGET = 1_000_000;

/** Samples/s the capture engine's per-sample verdict must sustain: 100 benches × 2 channels × 100 readings/s. */
const VERDICT_TARGET = 100 * 2 * 100;

/** Measure samples/s of the two-channel incremental hold analysis over ≥ 5 M samples. */
export async function run(): Promise<BenchFigure[]> {
  // Pre-generate a noisy trace so the timed loop measures the analyser only.
  const n = 1 << 16;
  const dp = new Float64Array(n);
  const ma = new Float64Array(n);
  let seed = 12345;
  for (let i = 0; i < n; i++) {
    seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0;
    dp[i] = 50 + (seed / 4294967296 - 0.5) * 0.01;
    ma[i] = 12 + (seed / 4294967296 - 0.5) * 0.002;
  }
  // With the sensitivity set, every current sample also feeds the per-reading error series, and the
  // Type A of the mean (Zhang 2006 effective n) and the leak/relaxation verdict are evaluated at the end.
  const h = new HoldAnalyzer({ dpSpan: 100, maPerDpUnit: 0.16 });
  // warm-up
  for (let i = 0; i < 200_000; i++) h.pushDp(i * 100, dp[i & (n - 1)]!);
  h.reset();
  const t0 = performance.now();
  for (let i = 0; i < SAMPLES; i++) {
    const t = i * 100;
    h.pushDp(t, dp[i & (n - 1)]!);
    h.pushMa(t, ma[i & (n - 1)]!);
  }
  const r = h.result();
  const typeA = h.typeA();
  const seconds = (performance.now() - t0) / 1000;
  if (r.dp.n !== SAMPLES) throw new Error('sample count mismatch');
  if (!typeA) throw new Error('no Type A from the hold');
  const rate = SAMPLES / seconds;

  // As the capture engine runs it: every sample also asks for the verdict (stability, leak limit)
  // and the leak-versus-relaxation trend of the point's own analyser (server/bench/capture-engine.ts).
  const PER_SAMPLE = Math.min(SAMPLES, 2_000_000);
  const hold = new HoldAnalyzer({ dpSpan: 100, maPerDpUnit: 0.16 });
  const trend = new HoldAnalyzer({ dpSpan: 100, trendWindowMs: 10_000 });
  let leaks = 0;
  const t1 = performance.now();
  for (let i = 0; i < PER_SAMPLE; i++) {
    const t = i * 100;
    const v = dp[i & (n - 1)]!;
    hold.pushDp(t, v);
    trend.pushDp(t, v);
    hold.pushMa(t, ma[i & (n - 1)]!);
    if (hold.result().leak || trend.trend().kind === 'leak') leaks++;
  }
  const verdictRate = PER_SAMPLE / ((performance.now() - t1) / 1000);
  if (leaks < 0) throw new Error('unreachable');
  return [
    {
      // The verdict allocates its result objects at every sample, so this path is far slower than
      // the incremental update alone; its target is the product's sizing, not a published value:
      // 100 benches on one server, two channels each, 100 readings/s per channel (product choice).
      name: 'hold verdict and leak trend at every sample (as the capture engine calls them)',
      value: Math.round(verdictRate),
      unit: 'samples/s',
      target: `>= ${VERDICT_TARGET.toLocaleString('en')} samples/s`,
      ok: verdictRate >= VERDICT_TARGET,
    },
    {
      name: 'hold analysis (incremental, DP + mA per sample)',
      value: Math.round(rate),
      unit: 'samples/s',
      target: `>= ${TARGET.toLocaleString('en')} samples/s`,
      ok: rate >= TARGET,
    },
    { name: 'hold analysis samples measured', value: SAMPLES, unit: 'samples' },
  ];
}

if (isMainModule(import.meta.url)) {
  const figures = await run();
  console.table(figures);
}
