import type { Run } from '../../../../shared/schemas/runs';
import { Badge } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import { formatFixed, formatFlow, formatNumber, formatRootDeparture, formatSigned, flowDecimals, unitLabel } from '../../../lib/format';
import { DECISION_LABELS, DECISION_TONES, hysteresisAt, parseResults, pointsWithResults, spanWords } from '../lib/results';

export interface PointTableProps {
  run: Run;
  selectedIndex: number | null;
  onSelect: (index: number) => void;
  /** The instrument's output mode: errors are % of flow span for a root in the transmitter. */
  outputMode?: string;
  /** Decimals of DP values (shared/format `dpDecimals` of the instrument's span); 4 when not given. */
  dpDecimals?: number;
}

/** Every point of a run with its capture, result, uncertainty and decision; a row opens its trace. */
const hyst = (h: number | null) => formatSigned(h, 3);

export function PointTable({ run, selectedIndex, onSelect, outputMode, dpDecimals = 4 }: PointTableProps) {
  const rows = pointsWithResults(run);
  const results = parseResults(run);
  const span = spanWords(outputMode);
  // Flow in engineering units (ISO 5167-2) when the instrument has an orifice primary element.
  const flows = rows.map((x) => x.result?.flow).filter((f) => !!f);
  const flowUnit = flows[0]?.unit;
  const flowDec = flowDecimals(Math.max(0, ...flows.map((f) => f.flow)));
  return (
    <div className="relative overflow-x-auto rounded-card border border-line bg-surface shadow-card">
      <table className="w-full border-collapse text-sm" aria-label={`Points of the ${run.kind} run`}>
        <thead className="bg-sunken/60 text-left text-xs tracking-wide text-ink-muted">
          <tr>
            <th className="px-3 py-2">Point</th>
            <th className="px-3 py-2 text-right">Applied ({unitLabel(run.unit)})</th>
            {flowUnit && <th className="px-3 py-2 text-right">Flow ({unitLabel(flowUnit)}; constant-C root departure)</th>}
            <th className="px-3 py-2 text-right">Current (mA)</th>
            <th className="px-3 py-2 text-right">Expected (mA)</th>
            <th className="px-3 py-2 text-right">Error (% {span})</th>
            <th className="px-3 py-2 text-right">Hysteresis (% {span})</th>
            <th className="px-3 py-2 text-right">U (% {span}; k, ν<sub>eff</sub>)</th>
            <th className="px-3 py-2 text-right">TUR</th>
            <th className="px-3 py-2">Decision</th>
            <th className="px-3 py-2">Flags</th>
          </tr>
        </thead>
        <tbody>
          {rows.map(({ point: p, result: r }) => (
            <tr
              key={p.index}
              aria-selected={p.index === selectedIndex}
              className={cn('border-t border-line', p.index === selectedIndex ? 'bg-accent-soft' : 'hover:bg-sunken/50')}
            >
              <td className="px-3 py-2 whitespace-nowrap">
                <button
                  type="button"
                  onClick={() => onSelect(p.index)}
                  disabled={!p.capture}
                  data-testid={`point-${p.index}`}
                  className="rounded font-medium text-accent underline-offset-2 hover:underline focus-visible:outline-2 focus-visible:outline-focus disabled:text-ink-faint disabled:no-underline"
                >
                  <span className="num">
                    {p.index + 1}. {formatNumber(p.nominalPct, 2)} % {p.basis === 'flow' ? 'flow' : 'DP'} {p.approach === 'up' ? '↑' : '↓'}
                  </span>
                </button>
              </td>
              <td className="num px-3 py-2 text-right">{p.capture ? formatFixed(p.capture.appliedDp, dpDecimals) : '—'}</td>
              {flowUnit && (
                <td className="num px-3 py-2 text-right" data-testid={`review-flow-${p.index}`}>
                  {r?.flow ? (
                    <>
                      {formatFlow(r.flow.flow, r.flow.unit, flowDec)}
                      <span className="ml-1 text-xs text-ink-muted">({formatRootDeparture(r.flow.pureRootDeparturePct)})</span>
                    </>
                  ) : (
                    '—'
                  )}
                </td>
              )}
              <td className="num px-3 py-2 text-right">{p.capture ? formatFixed(p.capture.measuredMa, 4) : '—'}</td>
              <td className="num px-3 py-2 text-right">{formatFixed(r?.expectedMa ?? p.expectedMa, 4)}</td>
              <td className="num px-3 py-2 text-right" data-testid={`review-error-${p.index}`}>
                {r ? formatSigned(r.errorPctSpan, 3) : '—'}
              </td>
              <td className="num px-3 py-2 text-right" data-testid={`review-hyst-${p.index}`}>
                {hyst(r && results ? hysteresisAt(results, r) : null)}
              </td>
              <td className="num px-3 py-2 text-right">
                {formatFixed(r?.expandedUncertaintyPctSpan, 3)}
                {r?.coverageFactor != null && (
                  <span className="ml-1 text-xs text-ink-muted">
                    (k {formatNumber(r.coverageFactor, 2)}, ν {r.effectiveDof == null ? '∞' : formatNumber(r.effectiveDof, 1)})
                  </span>
                )}
              </td>
              <td className="num px-3 py-2 text-right">{r?.tur != null ? `${formatNumber(r.tur, 1)}:1` : '—'}</td>
              <td className="px-3 py-2">
                {r ? <Badge tone={DECISION_TONES[r.decision] ?? 'neutral'}>{DECISION_LABELS[r.decision] ?? r.decision}</Badge> : '—'}
                {r?.undecided && <span className="ml-1 text-xs text-ink-muted">{r.undecided.message}</span>}
              </td>
              <td className="px-3 py-2">
                <div className="flex flex-wrap gap-1">
                  {p.flags.map((f) => (
                    <Badge key={f} tone={f === 'leak' ? 'danger' : 'warn'}>
                      {f}
                    </Badge>
                  ))}
                  {p.capture?.manualReason && <span className="text-xs text-ink-muted">“{p.capture.manualReason}”</span>}
                  {p.warning && <span className="text-xs text-warn">{p.warning}</span>}
                </div>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
