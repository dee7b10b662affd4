import type { Run } from '../../../../shared/schemas/runs';
import { Badge } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import { useLiveStreamNotice, type LiveStatus } from '../../../lib/live-stream';

/** The run's status in words and a tone. */
export function RunStatusBadge({ status }: { status: Run['status'] }) {
  const map = { running: ['Running', 'holding'], paused: ['Paused', 'warn'], complete: ['Complete', 'ok'], aborted: ['Aborted', 'neutral'] } as const;
  const [label, tone] = map[status];
  return (
    <Badge tone={tone} dot className="text-sm" >
      <span data-testid="run-status">{label}</span>
    </Badge>
  );
}

/** The live connection's state; after a sign-out, the server's reason. */
export function StreamDot({ status }: { status: LiveStatus }) {
  const ok = status === 'open';
  const notice = useLiveStreamNotice();
  return (
    <span className="inline-flex items-center gap-1.5 text-xs text-ink-muted" data-testid="stream-status" data-status={status} title={notice ?? undefined}>
      <span aria-hidden="true" className={cn('size-2 rounded-full', ok ? 'bg-ok' : status === 'reconnecting' ? 'animate-pulse bg-warn' : 'bg-ink-faint')} />
      {ok ? 'Live' : status === 'reconnecting' ? 'Reconnecting…' : status === 'connecting' ? 'Connecting…' : status === 'signed-out' ? (notice ?? 'Signed out') : 'Offline'}
    </span>
  );
}
