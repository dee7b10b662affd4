import { Badge, type BadgeTone } from '../../../components/ui/badge';
import { flowDecimals, formatFixed, formatNumber, formatRootDeparture, formatSigned, unitLabel as unitText } from '../../../lib/format';
import { nominalWords } from '../lib/live-values';
import { hysteresisAt, spanWords, type RunResults } from '../lib/results';

export const DECISION: Record<string, { label: string; tone: BadgeTone }> = {
  pass: { label: 'Pass', tone: 'ok' },
  'conditional-pass': { label: 'Conditional pass', tone: 'warn' },
  'conditional-fail': { label: 'Conditional fail', tone: 'danger' },
  undecided: { label: 'Undecided', tone: 'warn' },
  fail: { label: 'Fail', tone: 'danger' },
};

const signed = (v: number | null | undefined, d: number) => formatSigned(v, d);
const plain = (v: number | null | undefined, d: number) => formatFixed(v, d);

/**
 * Per-point results of a run: applied DP and flow, expected and measured current, error,
 * hysteresis, U, TUR, decision — every value as the API evaluated it (`results`), none recomputed.
 */
export function ResultsTable({
  results,
  unitLabel,
  rooted,
  outputMode,
  dpDecimals,
  caption,
  testId,
}: {
  results: RunResults;
  unitLabel: string;
  rooted: boolean;
  /** The instrument's output mode: says whether errors are % of flow span or of span. */
  outputMode?: string;
  dpDecimals: number;
  caption: string;
  testId?: string;
}) {
  const span = spanWords(outputMode, rooted);
  const overall = results.overallDecision ? DECISION[results.overallDecision] : undefined;
  // Flow in engineering units (ISO 5167-2) when the instrument has an orifice primary element.
  const flowUnit = results.points.find((p) => p.flow)?.flow?.unit;
  const flowDec = flowDecimals(Math.max(0, ...results.points.map((p) => p.flow?.flow ?? 0)));
  return (
    <div className="flex flex-col gap-2" data-testid={testId}>
      {/* A region that may scroll sideways on a narrow screen must be reachable by keyboard (WCAG 2.1.1). */}
      {/* eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex */}
      <div className="relative overflow-x-auto rounded-card border border-line bg-surface shadow-card" role="region" aria-label={`${caption}, scrollable`} tabIndex={0}>
        <table className="w-full border-collapse text-sm">
          <caption className="sr-only">{caption}</caption>
          <thead className="bg-sunken/60 text-xs font-semibold tracking-wide text-ink-muted">
            <tr>
              <th scope="col" className="px-3 py-2 text-left">Point</th>
              <th scope="col" className="px-3 py-2 text-right">Applied DP ({unitLabel})</th>
              {rooted && <th scope="col" className="px-3 py-2 text-right">Applied flow %</th>}
              {flowUnit && <th scope="col" className="px-3 py-2 text-right">Flow ({unitText(flowUnit)}; C, ε; constant-C root departure)</th>}
              <th scope="col" className="px-3 py-2 text-right">Expected mA</th>
              <th scope="col" className="px-3 py-2 text-right">Measured mA</th>
              <th scope="col" className="px-3 py-2 text-right">Error % {span}</th>
              <th scope="col" className="px-3 py-2 text-right">Hysteresis % {span}</th>
              <th scope="col" className="px-3 py-2 text-right">U % {span} (k, ν<sub>eff</sub>)</th>
              <th scope="col" className="px-3 py-2 text-right">TUR</th>
              <th scope="col" className="px-3 py-2 text-left">Decision</th>
            </tr>
          </thead>
          <tbody>
            {results.points.map((p) => {
              const d = DECISION[p.decision] ?? { label: p.decision, tone: 'neutral' as const };
              // Shown on both readings of the nominal: one value per nominal, from the API.
              const h = hysteresisAt(results, p);
              return (
                <tr key={p.index} className="border-t border-line" data-testid={`result-row-${p.index}`}>
                  <td className="px-3 py-2 whitespace-nowrap">
                    <span className="num">{nominalWords({ nominalPct: p.nominalPct, basis: p.basis ?? (rooted ? 'flow' : 'dp') })}</span> <span className="text-ink-muted">{p.direction === 'up' ? '↑' : '↓'}</span>
                  </td>
                  <td className="num px-3 py-2 text-right">{plain(p.appliedDp, dpDecimals)}</td>
                  {rooted && <td className="num px-3 py-2 text-right">{plain(p.appliedFlowPct, 3)}</td>}
                  {flowUnit && (
                    <td className="num px-3 py-2 text-right" data-testid={`result-flow-${p.index}`}>
                      {p.flow ? (
                        <>
                          {formatFixed(p.flow.flow, flowDec)}
                          <span className="ml-1 text-xs text-ink-muted">
                            (C {formatFixed(p.flow.C, 4)}, ε {formatFixed(p.flow.epsilon, 4)}; {formatRootDeparture(p.flow.pureRootDeparturePct)})
                          </span>
                        </>
                      ) : (
                        '—'
                      )}
                    </td>
                  )}
                  <td className="num px-3 py-2 text-right">{plain(p.expectedMa, 4)}</td>
                  <td className="num px-3 py-2 text-right" data-testid={`result-ma-${p.index}`}>{plain(p.measuredMa, 4)}</td>
                  <td className="num px-3 py-2 text-right" data-testid={`result-error-${p.index}`}>{signed(p.errorPctSpan, 3)}</td>
                  <td className="num px-3 py-2 text-right" data-testid={`result-hyst-${p.index}`}>{plain(h, 3)}</td>
                  <td className="num px-3 py-2 text-right" data-testid={`result-u-${p.index}`}>
                    {plain(p.expandedUncertaintyPctSpan, 3)}
                    {p.coverageFactor != null && (
                      <span className="ml-1 text-xs text-ink-muted">
                        (k {formatNumber(p.coverageFactor, 2)}, ν {p.effectiveDof == null ? '∞' : formatNumber(p.effectiveDof, 1)})
                      </span>
                    )}
                  </td>
                  <td className="num px-3 py-2 text-right">{p.tur === null || p.tur === undefined ? '—' : `${formatNumber(p.tur, 1)}:1`}</td>
                  <td className="px-3 py-2" data-testid={`result-decision-${p.index}`} data-decision={p.decision}>
                    <Badge tone={d.tone}>{d.label}</Badge>
                    {p.undecided && <span className="ml-1 text-xs text-ink-muted">{p.undecided.message}</span>}
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      <p className="flex flex-wrap items-center gap-x-4 gap-y-1 text-sm text-ink-muted">
        <span>
          Overall:{' '}
          {overall ? (
            <Badge tone={overall.tone} dot className="text-sm" >
              <span data-testid="overall-decision" data-decision={results.overallDecision ?? ''}>{overall.label}</span>
            </Badge>
          ) : (
            '—'
          )}
        </span>
        {results.worstError && (
          <span>
            Worst error <span className="num text-ink">{signed(results.worstError.errorPctSpan, 3)} % {span}</span> at point <span className="num">{results.worstError.index + 1}</span>
          </span>
        )}
        {results.maxHysteresisPctSpan !== null && results.maxHysteresisPctSpan !== undefined && (
          <span>
            Max hysteresis <span className="num text-ink" data-testid="max-hysteresis">{formatNumber(results.maxHysteresisPctSpan, 3)} % {span}</span>
          </span>
        )}
      </p>
    </div>
  );
}
