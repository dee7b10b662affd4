import type { RunPoint } from '../../../../shared/schemas/runs';
import { Badge } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import { formatFixed, formatNumber, formatSigned } from '../../../lib/format';
import { nominalWords } from '../lib/live-values';
import { resultsByPoint, type RunResults } from '../lib/results';
import type { FlowView } from '../lib/flow';
import { FLAG_LABEL, STATE_LABEL } from './current-point';
import { StateMark } from './state-mark';

/**
 * Every point of the run with its state, flags and captured values; redo on captured points.
 * Narrow enough for a 28rem column; scrolls inside its own frame rather than being cut off.
 */
export function PointList({
  points,
  currentIndex,
  results,
  dpDecimals,
  canAct,
  onRedo,
  rooted,
  flow,
  paused = false,
}: {
  points: readonly RunPoint[];
  /** The run is paused: the current point reads as paused, not as its last state. */
  paused?: boolean;
  currentIndex: number | null;
  results: RunResults | null;
  dpDecimals: number;
  canAct: boolean;
  onRedo: (index: number) => void;
  rooted: boolean;
  /** Flow in engineering units (orifice primary element): the target's, or the evaluated one once captured. */
  flow?: FlowView | undefined;
}) {
  const byPoint = resultsByPoint(points, results);
  return (
    // A region that may scroll sideways on a narrow screen must be reachable by keyboard (WCAG 2.1.1).
    // eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex
    <div className="relative overflow-x-auto rounded-card border border-line bg-surface shadow-card" role="region" aria-label="Points, scrollable" tabIndex={0}>
      <table className="w-full text-sm" aria-label="Points">
        <thead className="bg-sunken/60 text-left text-xs font-semibold text-ink-muted">
          <tr>
            <th scope="col" className="px-2 py-2 first:pl-3">
              Point
            </th>
            <th scope="col" className="px-2 py-2 first:pl-3">
              State
            </th>
            <th scope="col" className="px-2 py-2 text-right">
              mA
            </th>
            <th scope="col" className="px-2 py-2 text-right whitespace-nowrap" title={rooted ? 'Error, % of flow span' : 'Error, % of span'}>
              Error %
            </th>
            <th scope="col" className="px-2 py-2">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {points.map((p) => {
            const current = p.index === currentIndex && p.state !== 'captured';
            // The API's evaluated error (at the DP actually applied), never one recomputed here.
            const r = byPoint.get(p.index);
            const err = r?.errorPctSpan ?? null;
            return (
              <tr
                key={p.index}
                data-testid={`point-row-${p.index}`}
                data-state={p.state}
                aria-current={current ? 'step' : undefined}
                className={cn('border-t border-line', current && 'bg-accent-soft/50')}
              >
                <td className="py-2 pr-2 pl-3">
                  <div className="flex items-center gap-2 whitespace-nowrap">
                    <span className={cn('num w-5 text-right text-ink-faint', current && 'text-accent')}>{p.index + 1}</span>
                    <span className="num font-medium text-ink">{nominalWords(p)}</span>
                    <span aria-label={p.approach === 'up' ? 'from below' : 'from above'} className="text-ink-muted">
                      {p.approach === 'up' ? '↑' : '↓'}
                    </span>
                  </div>
                  <div className="num pl-7 text-xs text-ink-muted">
                    {formatFixed(p.targetDp, dpDecimals)}
                    {flow && (
                      <>
                        {' · '}
                        <span data-testid={`point-flow-${p.index}`}>{flow.text(r?.flow?.flow ?? flow.at(p.targetDp)?.flow)}</span>
                      </>
                    )}
                  </div>
                </td>
                <td className="px-2 py-2">
                  <div className="flex flex-wrap gap-1">
                    {current && paused ? (
                      <Badge tone="warn">
                        <StateMark state="paused" />
                        Paused
                      </Badge>
                    ) : (
                      <Badge tone={p.state}>
                        <StateMark state={p.state} />
                        {STATE_LABEL[p.state]}
                      </Badge>
                    )}
                    {p.flags.map((f) => (
                      <Badge key={f} tone={f}>
                        {FLAG_LABEL[f] ?? f}
                      </Badge>
                    ))}
                  </div>
                </td>
                <td className="num px-2 py-2 text-right" data-testid={`point-ma-${p.index}`}>
                  {p.capture ? formatNumber(p.capture.measuredMa, 4) : '—'}
                </td>
                <td className={cn('num px-2 py-2 text-right', r && r.decision !== 'pass' && 'text-danger')} data-testid={`point-error-${p.index}`}>
                  {err === null ? '—' : formatSigned(err, 3)}
                </td>
                <td className="py-2 pr-2 text-right">
                  {p.state === 'captured' && canAct && (
                    <button type="button" onClick={() => onRedo(p.index)} className="rounded px-2 py-1 text-xs font-medium text-accent hover:bg-sunken" data-testid={`redo-${p.index}`}>
                      Redo
                    </button>
                  )}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
