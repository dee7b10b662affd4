import { Link } from 'react-router';
import type { JobDetail } from '../../../../shared/schemas/jobs';
import { Badge, type BadgeTone } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { formatDateTime } from '../../../lib/format';

const RUN_STATUS: Record<string, { label: string; tone: BadgeTone }> = {
  running: { label: 'Running', tone: 'holding' },
  paused: { label: 'Paused', tone: 'warn' },
  complete: { label: 'Complete', tone: 'ok' },
  aborted: { label: 'Aborted', tone: 'neutral' },
};

export const DECISION_LABEL: Record<string, { label: string; tone: BadgeTone }> = {
  pass: { label: 'Pass', tone: 'ok' },
  'conditional-pass': { label: 'Conditional pass', tone: 'warn' },
  'conditional-fail': { label: 'Conditional fail', tone: 'danger' },
  undecided: { label: 'Undecided', tone: 'warn' },
  fail: { label: 'Fail', tone: 'danger' },
};

type Summary = JobDetail['runs'][number];

/** Runs of one kind with links to their capture screens, and a button to start one. */
export function RunLauncher({
  runs,
  label,
  startLabel,
  canStart,
  onStart,
  starting,
  testId,
}: {
  runs: readonly Summary[];
  label: string;
  startLabel: string;
  canStart: boolean;
  onStart: () => void;
  starting: boolean;
  testId: string;
}) {
  const open = runs.find((r) => r.status === 'running' || r.status === 'paused');
  return (
    <div className="flex flex-col gap-3">
      {runs.length > 0 && (
        <ul aria-label={label} className="divide-y divide-line rounded-md border border-line">
          {runs.map((r) => {
            const st = RUN_STATUS[r.status] ?? { label: r.status, tone: 'neutral' as const };
            const dec = r.overallDecision ? DECISION_LABEL[r.overallDecision] : undefined;
            return (
              <li key={r.id} className="flex flex-wrap items-center gap-3 px-3 py-2 text-sm">
                <Link to={`/runs/${r.id}`} className="font-medium text-accent underline-offset-2 hover:underline">
                  {r.status === 'running' || r.status === 'paused' ? 'Open the capture screen' : 'View run'}
                </Link>
                <span className="num text-ink-muted">{formatDateTime(r.startedAt)}</span>
                <Badge tone={st.tone} dot>
                  {st.label}
                </Badge>
                {dec && <Badge tone={dec.tone}>{dec.label}</Badge>}
              </li>
            );
          })}
        </ul>
      )}
      {!open && (
        <div>
          <Button onClick={onStart} disabled={!canStart} loading={starting} data-testid={testId}>
            {startLabel}
          </Button>
        </div>
      )}
    </div>
  );
}
