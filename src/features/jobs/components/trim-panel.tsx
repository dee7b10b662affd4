import { Link } from 'react-router';
import type { TrimPlan } from '../../../../shared/calc';
import type { Run } from '../../../../shared/schemas/runs';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { formatFixed, formatNumber, formatSigned } from '../../../lib/format';

const TRIM_LABEL: Record<string, string> = { 'zero-trim': 'Zero trim', 'lower-trim': 'Lower trim', 'span-trim': 'Span trim' };

/** A trim reading: the captured point and its error as the API evaluated it for its run. */
export interface TrimReading {
  point: Run['points'][number];
  /** % of output span (flow span for a root in the transmitter), from the run's `results`; null without results. */
  errorPctSpan: number | null;
}

/** The API's evaluated error of a run's point: results cover the captured points in plan order. */
function evaluatedError(run: Run, index: number): number | null {
  const results = run.results as { points?: Array<{ errorPctSpan?: unknown }> } | null;
  const k = run.points.filter((p) => p.capture && p.index < index).length;
  const e = results?.points?.[k]?.errorPctSpan;
  return typeof e === 'number' ? e : null;
}

/**
 * Captured readings of the trim runs of one kind, in order: the first is "before", the last
 * "after" (the certificate's adjustment table pairs them the same way).
 */
export function trimReadings(runs: readonly Run[], kind: string): { before: TrimReading | undefined; after: TrimReading | undefined; runs: Run[] } {
  const mine = runs.filter((r) => r.kind === 'trim' && r.trim === kind).sort((a, b) => a.startedAt.localeCompare(b.startedAt));
  const captured = mine.flatMap((r) => r.points.filter((p) => p.capture).map((point) => ({ point, errorPctSpan: evaluatedError(r, point.index) })));
  return { before: captured[0], after: captured.length > 1 ? captured.at(-1) : undefined, runs: mine };
}

/**
 * Guides the trims for the output mode (shared/calc `trimPlan`): a lower trim at 10 % flow
 * (1 % DP) and a span trim at 100 % for a root in the transmitter — never a zero trim there —
 * and zero and span trims otherwise. Each trim is a short run that captures the reading live.
 */
export function TrimPanel({
  plan,
  runs,
  unitLabel,
  dpDecimals,
  canStart,
  onStart,
  starting,
  rooted,
}: {
  plan: TrimPlan;
  runs: readonly Run[];
  unitLabel: string;
  dpDecimals: number;
  canStart: boolean;
  onStart: (kind: 'zero-trim' | 'lower-trim' | 'span-trim') => void;
  starting: string | null;
  rooted: boolean;
}) {
  return (
    <div className="flex flex-col gap-3">
      {rooted && (
        <p className="text-sm text-ink-muted">
          The square root is taken in the transmitter: trim the lower point at 10 % flow (1 % DP), not at zero — at 0 % DP the root&apos;s gain has no bound and the low-flow cutoff holds the output at 4 mA.
        </p>
      )}
      {plan.warnings.map((w) => (
        <p key={w} className="text-sm font-medium text-warn">
          Note: {w}
        </p>
      ))}
      <ol className="grid gap-3 md:grid-cols-2">
        {plan.steps.map((s, i) => {
          const r = trimReadings(runs, s.kind);
          const open = r.runs.find((x) => x.status === 'running' || x.status === 'paused');
          const done = r.runs.some((x) => x.status === 'complete');
          const span = rooted ? 'flow span' : 'span';
          const err = (e: number | null) => (e === null ? '—' : `${formatSigned(e, 3)} % ${span}`);
          return (
            <li key={s.kind} className="rounded-md border border-line p-4" data-testid={`trim-${s.kind}`}>
              <div className="flex items-start justify-between gap-2">
                <p className="font-semibold text-ink">
                  <span className="num text-ink-faint">{i + 1}.</span> {TRIM_LABEL[s.kind]}
                </p>
                {done ? <Badge tone="ok">Captured</Badge> : <Badge>Not yet</Badge>}
              </div>
              <p className="mt-1 text-sm text-ink-muted">
                Apply <span className="num text-ink">{formatFixed(s.targetDp, dpDecimals)}</span> {unitLabel} (<span className="num">{formatNumber(s.dpPct, 2)} % DP</span>
                {s.flowPct !== undefined && (
                  <>
                    , <span className="num">{formatNumber(s.flowPct, 2)} % flow</span>
                  </>
                )}
                ); trim until the output reads <span className="num text-ink">{formatNumber(s.expectedMa, 3)} mA</span>.
              </p>
              <dl className="mt-3 grid grid-cols-2 gap-2 text-sm">
                <div className="rounded bg-sunken px-3 py-2">
                  <dt className="text-xs text-ink-muted">Before</dt>
                  <dd className="num text-lg text-ink" data-testid={`trim-before-${s.kind}`}>
                    {r.before?.point.capture ? `${formatNumber(r.before.point.capture.measuredMa, 4)} mA` : '—'}
                  </dd>
                  {r.before?.point.capture && (
                    <dd className="num text-xs text-ink-muted" data-testid={`trim-before-error-${s.kind}`}>
                      {err(r.before.errorPctSpan)}
                    </dd>
                  )}
                </div>
                <div className="rounded bg-sunken px-3 py-2">
                  <dt className="text-xs text-ink-muted">After</dt>
                  <dd className="num text-lg text-ink" data-testid={`trim-after-${s.kind}`}>
                    {r.after?.point.capture ? `${formatNumber(r.after.point.capture.measuredMa, 4)} mA` : '—'}
                  </dd>
                  {r.after?.point.capture && (
                    <dd className="num text-xs text-ink-muted" data-testid={`trim-after-error-${s.kind}`}>
                      {err(r.after.errorPctSpan)}
                    </dd>
                  )}
                </div>
              </dl>
              <div className="mt-3">
                {open ? (
                  <Link to={`/runs/${open.id}`} className="text-sm font-medium text-accent underline-offset-2 hover:underline">
                    Open the capture screen
                  </Link>
                ) : (
                  <Button size="sm" variant={done ? 'secondary' : 'primary'} disabled={!canStart} loading={starting === s.kind} onClick={() => onStart(s.kind)} data-testid={`start-${s.kind}`}>
                    {done ? `Capture ${TRIM_LABEL[s.kind]?.toLowerCase()} again` : `Start ${TRIM_LABEL[s.kind]?.toLowerCase()}`}
                  </Button>
                )}
              </div>
            </li>
          );
        })}
      </ol>
    </div>
  );
}
