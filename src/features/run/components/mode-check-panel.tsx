import { checkOutputMode, isRootedOutput } from '../../../../shared/calc';
import type { Run } from '../../../../shared/schemas/runs';
import { cn } from '../../../lib/cn';
import { formatNumber } from '../../../lib/format';

/** The output-mode check: what to apply, what the register says, and what was found (or is being read). */
export function ModeCheckPanel({ run, measuredMa, registerMode }: { run: Run; measuredMa: number | null; registerMode: string | undefined }) {
  const finding = run.modeCheck;
  const preview = measuredMa === null ? null : checkOutputMode(measuredMa);
  const words = { 'root-in-transmitter': 'square root in the transmitter (about 12 mA)', 'linear-output': 'output linear in DP (about 8 mA)', 'cannot-tell': 'cannot tell (near neither 8 nor 12 mA)' } as const;
  const register = registerMode ? (isRootedOutput(registerMode as 'linear') ? 'square root in the transmitter' : 'output linear in DP') : '—';
  return (
    <section aria-label="Output-mode check" data-testid="mode-check" className={cn('rounded-card border px-4 py-3', finding && !finding.matchesRegister ? 'border-2 border-danger bg-danger-soft' : 'border-line bg-surface')}>
      <p className="text-ink">
        Apply <span className="num font-semibold">25 % DP</span>. A transmitter that takes the square root reads about <span className="num">12 mA</span> (50 % flow); one that does not reads
        about <span className="num">8 mA</span>. The register says: <span className="font-semibold">{register}</span>.
      </p>
      {finding ? (
        <p className={cn('mt-2 text-lg font-semibold', finding.matchesRegister ? 'text-ok' : 'text-danger')} data-testid="mode-check-finding" data-finding={finding.finding} data-matches={String(finding.matchesRegister)}>
          Found <span className="num">{formatNumber(finding.measuredMa, 3)} mA</span>: {words[finding.finding]}.{' '}
          {finding.matchesRegister ? 'Matches the register.' : 'Does not match the register — stop. Correct the register or the transmitter configuration, then repeat the check.'}
        </p>
      ) : (
        preview && (
          <p className="mt-2 text-sm text-ink-muted">
            Now reading <span className="num">{formatNumber(measuredMa ?? 0, 3)} mA</span>: {words[preview.decision]}.
          </p>
        )
      )}
    </section>
  );
}
