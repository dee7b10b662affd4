import { RunResultsSchema, type ResultPoint, type Run, type RunPoint, type RunResults } from '../../../../shared/schemas/runs';

export type PointResult = ResultPoint;
export type { RunResults };

/** A run's results through the one results contract (shared/schemas/runs `RunResultsSchema`). */
export function parseResults(run: Run): RunResults | null {
  const r = RunResultsSchema.safeParse(run.results);
  return r.success ? r.data : null;
}

/**
 * Hysteresis at a result's nominal, % of span, as the API evaluated it (the difference of the up
 * and down errors at that nominal); null when it was not read both ways. Never recomputed here.
 */
export function hysteresisAt(results: RunResults, point: Pick<PointResult, 'nominalPct' | 'basis'>): number | null {
  const h = results.hysteresis?.find((x) => x.nominalPct === point.nominalPct && (x.basis === undefined || point.basis === undefined || x.basis === point.basis));
  return h?.hysteresisPctSpan ?? null;
}

/** What errors are a percentage of: flow span for a root in the transmitter, else output span (REFERENCE.md). */
export function spanWords(outputMode: string | undefined): 'flow span' | 'span' {
  return outputMode === 'sqrt-transmitter' ? 'flow span' : 'span';
}

/** Each planned point with its result (results are computed over the captured points, in order). */
export function pointsWithResults(run: Run): Array<{ point: RunPoint; result: PointResult | null }> {
  const results = parseResults(run);
  let k = 0;
  return run.points.map((point) => ({ point, result: point.capture && results ? (results.points[k++] ?? null) : null }));
}

export const DECISION_LABELS: Record<string, string> = {
  pass: 'Pass',
  'conditional-pass': 'Conditional pass',
  'conditional-fail': 'Conditional fail',
  undecided: 'Undecided',
  fail: 'Fail',
};
export const DECISION_TONES: Record<string, 'ok' | 'warn' | 'danger' | 'neutral'> = {
  pass: 'ok',
  'conditional-pass': 'warn',
  'conditional-fail': 'warn',
  undecided: 'warn',
  fail: 'danger',
};

export const RUN_KIND_LABELS: Record<string, string> = { 'mode-check': 'Mode check', 'as-found': 'As-found', trim: 'Trim', 'as-left': 'As-left' };

/** The window a lead looks at for one point: from the end of the previous hold (the approach) to just after its own hold. */
export function pointWindow(run: Run, index: number): { from: number; to: number } | null {
  const p = run.points[index];
  if (!p?.capture) return null;
  const prev = run.points
    .slice(0, index)
    .reverse()
    .find((x) => x.capture);
  const from = prev?.capture ? prev.capture.endMs : p.capture.startMs - 60_000;
  return { from: from - 1000, to: p.capture.endMs + 5000 };
}

/** The run the review opens first: the first completed as-found run, else the first completed run. */
export function defaultRunId(runs: ReadonlyArray<{ id: string; kind: string; status: string }>): string | null {
  const done = runs.filter((r) => r.status === 'complete');
  return (done.find((r) => r.kind === 'as-found') ?? done[0])?.id ?? null;
}
