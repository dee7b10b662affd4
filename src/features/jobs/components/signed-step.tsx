import type { z } from 'zod';
import type { SignedStepSchema } from '../../../../shared/schemas/jobs';
import { Button } from '../../../components/ui/button';
import { formatDateTime } from '../../../lib/format';

type Signed = z.infer<typeof SignedStepSchema>;

export function formatStamp(s: NonNullable<Signed>): string {
  const f = formatDateTime(s.at);
  const when = f === '—' ? s.at : f;
  return `${s.byName}, ${when}`;
}

/** One acknowledgement: a confirm button, then who confirmed it and when. */
export function SignedStep({
  label,
  detail,
  value,
  onConfirm,
  pending,
  disabled,
  testId,
}: {
  label: string;
  detail?: string;
  value: Signed;
  onConfirm: () => void;
  pending?: boolean;
  disabled?: boolean;
  testId: string;
}) {
  return (
    <div className="flex flex-wrap items-center justify-between gap-3 py-3" data-testid={testId} data-done={value ? 'true' : 'false'}>
      <div className="min-w-0">
        <p className="font-medium text-ink">{label}</p>
        {detail && <p className="text-sm text-ink-muted">{detail}</p>}
      </div>
      {value ? (
        <p className="flex items-center gap-2 text-sm text-ok">
          <svg viewBox="0 0 16 16" className="size-4" aria-hidden="true">
            <path d="M3 8.5l3 3 7-7" fill="none" stroke="currentColor" strokeWidth="2" strokeLinecap="round" strokeLinejoin="round" />
          </svg>
          <span>
            Confirmed by <span className="text-ink">{formatStamp(value)}</span>
          </span>
        </p>
      ) : (
        <Button variant="secondary" size="sm" onClick={onConfirm} loading={pending} disabled={disabled}>
          Confirm
        </Button>
      )}
    </div>
  );
}
