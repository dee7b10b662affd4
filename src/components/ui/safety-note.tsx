import { cn } from '../../lib/cn';

export interface SafetyNoteProps {
  /** One-line summary with the full list behind a disclosure. */
  compact?: boolean;
  /** Which cautions: before the work (default) or on returning the loop to service. */
  stage?: 'before' | 'return';
  className?: string;
}

const CAUTIONS = [
  'Isolate and vent the transmitter as the permit to work describes before connecting anything.',
  'Treat the process medium as hazardous (pressure, temperature, toxic or flammable) until proved otherwise.',
  'Any interlock bypass must be authorised before it is applied and removed before the loop returns to service.',
  'Do not overpressure the transmitter or the calibrator: check both ranges and the static pressure rating first.',
];

const RETURN_CAUTIONS = [
  'Remove any interlock bypass, and have it recorded as removed, before the loop goes back to the operators.',
  'Restore the manifold in the order the procedure gives (equalising valve closed last) so the transmitter never sees full static pressure on one side.',
  'Check for leaks at every fitting you opened, and that drains and vents are closed.',
  'Tell the control room the reading is live again, and watch it return to a plausible process value.',
];

const DEFER = 'Follow your site procedures, local codes and licensed practice; Stillpoint does not replace them.';

/** The usual cautions shown before bench or field work on a transmitter. */
export function SafetyNote({ compact = false, stage = 'before', className }: SafetyNoteProps) {
  const body = (
    <>
      <ul className="mt-2 list-disc space-y-1 pl-5">
        {(stage === 'return' ? RETURN_CAUTIONS : CAUTIONS).map((c) => (
          <li key={c}>{c}</li>
        ))}
      </ul>
      <p className="mt-2 font-medium">{DEFER}</p>
    </>
  );
  return (
    <aside
      aria-label="Safety cautions"
      className={cn('rounded-card border border-warn/40 bg-warn-soft px-4 py-3 text-sm text-ink', className)}
    >
      <div className="flex items-center gap-2 font-semibold text-warn">
        <svg viewBox="0 0 20 20" className="size-4 shrink-0" aria-hidden="true">
          <path d="M10 2.5l8 14H2z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
          <path d="M10 8v4" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" />
          <circle cx="10" cy="14.3" r="0.9" fill="currentColor" />
        </svg>
        {stage === 'return' ? 'Safety on return to service' : 'Safety'}
      </div>
      {compact ? (
        <details className="mt-1">
          <summary className="cursor-pointer text-ink-muted">Isolation, hazardous media, bypasses, overpressure</summary>
          {body}
        </details>
      ) : (
        body
      )}
    </aside>
  );
}
