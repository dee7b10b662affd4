import type { Run } from '../../../../shared/schemas/runs';
import { formatFixed, formatSigned } from '../../../lib/format';
import { nominalWords } from '../lib/live-values';

/**
 * Per point, the HART device beside the reference meter: the digital PV against the applied DP
 * (digital error, % of DP span: the sensor side) and the meter's mA against the loop current the
 * device says it drives (analog D/A error, mA and % of 16 mA: the output side), as stored with each
 * capture. Nothing when no point has HART values.
 */
export function HartErrorsTable({ run, unitLabel, dpDecimals }: { run: Run; unitLabel: string; dpDecimals: number }) {
  const rows = run.points.filter((p) => p.capture?.hart);
  if (!rows.length) return null;
  return (
    <section aria-labelledby="hart-errors" data-testid="hart-errors">
      <h2 id="hart-errors" className="mb-2 text-lg font-semibold text-ink">
        Digital and analog errors (HART)
      </h2>
      {/* eslint-disable-next-line jsx-a11y/no-noninteractive-tabindex */}
      <div className="relative overflow-x-auto rounded-card border border-line bg-surface shadow-card" role="region" aria-label="Digital and analog errors, scrollable" tabIndex={0}>
        <table className="w-full border-collapse text-sm">
          <thead className="bg-sunken/60 text-xs font-semibold tracking-wide text-ink-muted">
            <tr>
              <th scope="col" className="px-3 py-2 text-left">Point</th>
              <th scope="col" className="px-3 py-2 text-right">Applied DP ({unitLabel})</th>
              <th scope="col" className="px-3 py-2 text-right">Digital PV ({unitLabel})</th>
              <th scope="col" className="px-3 py-2 text-right">Digital error % of DP span</th>
              <th scope="col" className="px-3 py-2 text-right">Meter mA</th>
              <th scope="col" className="px-3 py-2 text-right">Device loop mA</th>
              <th scope="col" className="px-3 py-2 text-right">Analog (D/A) error mA</th>
              <th scope="col" className="px-3 py-2 text-right">Analog error % of 16 mA</th>
            </tr>
          </thead>
          <tbody>
            {rows.map((p) => {
              const c = p.capture!;
              const h = c.hart!;
              return (
                <tr key={p.index} className="border-t border-line" data-testid={`hart-row-${p.index}`}>
                  <td className="px-3 py-2 whitespace-nowrap">
                    <span className="num">{nominalWords(p)}</span> <span className="text-ink-muted">{p.approach === 'up' ? '↑' : '↓'}</span>
                  </td>
                  <td className="num px-3 py-2 text-right">{formatFixed(c.appliedDp, dpDecimals)}</td>
                  <td className="num px-3 py-2 text-right">{formatFixed(h.pv, dpDecimals)}</td>
                  <td className="num px-3 py-2 text-right" data-testid={`hart-digital-${p.index}`}>{formatSigned(h.digitalErrorPctSpan, 3)}</td>
                  <td className="num px-3 py-2 text-right">{formatFixed(c.measuredMa, 4)}</td>
                  <td className="num px-3 py-2 text-right">{formatFixed(h.loopMa, 4)}</td>
                  <td className="num px-3 py-2 text-right" data-testid={`hart-analog-${p.index}`}>{formatSigned(h.analogErrorMa, 4)}</td>
                  <td className="num px-3 py-2 text-right">{formatSigned(h.analogErrorPctSpan, 3)}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
    </section>
  );
}
