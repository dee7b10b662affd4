/**
 * Throughput of the incremental hold analysis (shared/calc HoldAnalyzer) on one core.
 * Run: `npx tsx bench/calc.bench.ts`. Exports `run()` for an aggregating bench runner.
 */
import { pathToFileURL } from 'node:url';
import { HoldAnalyzer } from '../shared/calc';

/** One benchmark figure. */
export interface BenchFigure {
  name: string;
  value: number;
  unit: string;
  target?: string;
  ok?: boolean;
}

const SAMPLES = 6_000_000;
const TARGET = 1_000_000;

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
  return [
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

const isMain = typeof process !== 'undefined' && process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href;
if (isMain) {
  const figures = await run();
  console.table(figures);
}
