import type { ReactNode } from 'react';
import { cn } from '../../../lib/cn';
import { formatFixed, formatNumber, formatSigned } from '../../../lib/format';
import type { LiveValues } from '../lib/live-values';


function Readout({ label, value, unit, testId, tone, size = 'lg', sub, className }: { label: string; value: string; unit: string; testId: string; tone?: 'ok' | 'warn' | 'danger' | undefined; size?: 'lg' | 'md'; sub?: ReactNode; className?: string }) {
  return (
    // A size container: the numerals shrink with a narrow card instead of spilling out of it.
    <div className={cn('@container min-w-0 rounded-card border border-line bg-surface px-4 py-3 shadow-card', className)}>
      <dt className="text-xs font-semibold tracking-wide text-ink-muted">{label}</dt>
      <dd className="mt-1 flex flex-wrap items-baseline gap-x-2">
        <span
          data-testid={testId}
          className={cn(
            'num leading-none',
            // About eight characters of the mono face fit the card's width (0.6 em each).
            size === 'lg' ? 'font-semibold [font-size:min(var(--sp-readout-size),19cqi)]' : 'font-semibold [font-size:min(calc(var(--sp-readout-size)*0.62),14cqi)]',
            tone === 'ok' ? 'text-ok' : tone === 'warn' ? 'text-warn' : tone === 'danger' ? 'text-danger' : 'text-ink',
          )}
        >
          {value}
        </span>
        <span className="text-sm font-medium text-ink-muted">{unit}</span>
      </dd>
      {sub && <dd className="num mt-1 text-xs text-ink-muted">{sub}</dd>}
    </div>
  );
}

export interface ReadoutsProps {
  values: LiveValues;
  unitLabel: string;
  rooted: boolean;
  /** Tolerance, ± % of span, to colour the live error. */
  tolerancePct: number | undefined;
  /** DP decimals: the last digit steps by at most 0.01 % of span (shared/format `dpDecimals`). */
  dpDecimals: number;
  /**
   * Flow in engineering units at the live DP (orifice primary element, ISO 5167-2), shown beside
   * % flow with the constant-C square-root departure; absent for other instruments.
   */
  flow?: { text: string; departure: string } | undefined;
}

/** Big live numerals: applied DP (unit and %), applied flow %, measured and expected mA, live error. */
export function Readouts({ values: v, unitLabel, rooted, tolerancePct, dpDecimals, flow }: ReadoutsProps) {
  const errTone =
    v.errorPctSpan === null || tolerancePct === undefined ? undefined : Math.abs(v.errorPctSpan) <= tolerancePct ? 'ok' : Math.abs(v.errorPctSpan) <= 2 * tolerancePct ? 'warn' : 'danger';
  return (
    // Applied DP and measured current first (one per line on a phone, side by side from 640 px), then the rest; from 1024 px three across, then two.
    <dl className="grid grid-cols-2 gap-3 lg:grid-cols-6" aria-label="Live readings">
      <Readout className="col-span-2 sm:col-span-1 lg:col-span-2" label="Applied DP" value={formatFixed(v.appliedDp, dpDecimals)} unit={unitLabel} testId="live-dp" sub={v.dpPct === null ? undefined : `${formatNumber(v.dpPct, 2)} % of DP span`} />
      {rooted ? (
        <Readout
          className="order-1 lg:order-none lg:col-span-2"
          label="Applied flow"
          value={formatFixed(v.flowPct, 2)}
          unit="% flow"
          testId="live-flow"
          sub={
            flow ? (
              <>
                <span className="font-semibold text-ink" data-testid="live-flow-eng">
                  {flow.text}
                </span>{' '}
                <span title="How far the constant-C square-root law departs from ISO 5167-2 at this DP">(root {flow.departure})</span>
                {v.dpPct !== null && <> · from {formatNumber(v.dpPct, 3)} % DP</>}
              </>
            ) : v.dpPct === null ? undefined : (
              `from ${formatNumber(v.dpPct, 3)} % DP`
            )
          }
        />
      ) : (
        <Readout className="order-1 lg:order-none lg:col-span-2" label="Applied DP %" value={formatFixed(v.dpPct, 2)} unit="% span" testId="live-dp-pct" />
      )}
      <Readout className="col-span-2 sm:col-span-1 lg:col-span-2" label="Measured" value={formatFixed(v.measuredMa, 3)} unit="mA" testId="live-ma" tone={v.ne43 && v.ne43 !== 'measurement' ? 'danger' : undefined} />
      <Readout className="order-1 lg:order-none lg:col-span-3" label="Expected" value={formatFixed(v.expectedMa, 3)} unit="mA" testId="live-expected" size="md" />
      <Readout
        className="order-1 col-span-2 lg:order-none lg:col-span-3"
        label="Error"
        value={formatSigned(v.errorPctSpan, 3)}
        unit={rooted ? '% flow span' : '% span'}
        testId="live-error"
        tone={errTone}
        size="md"
        sub={tolerancePct === undefined ? undefined : `tolerance ±${formatNumber(tolerancePct, 3)} %`}
      />
    </dl>
  );
}
