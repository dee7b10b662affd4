import { Badge } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import { formatNumber, unitLabel } from '../../../lib/format';
import { useLiveRun } from '../../../stores/live-run';
import type { BenchStatus } from '../api/get-bench';
import { HartModemPanel } from './hart-modem-panel';

const ROLE = { pressure: 'Pressure reference (applied DP)', current: 'Current meter (loop mA)' } as const;
const PROTOCOL = { pressure: 'Line protocol (calibrator profile)', current: 'SCPI (IEEE 488.2)' } as const;

function ago(ms: number | null): string {
  if (ms === null) return 'never';
  const s = Math.max(0, (Date.now() - ms) / 1000);
  return s < 2 ? 'just now' : s < 120 ? `${Math.round(s)} s ago` : `${Math.round(s / 60)} min ago`;
}

/** One card per bench device: role, port, protocol, live state and counters. */
export function DevicePanels({ status }: { status: BenchStatus }) {
  const live = useLiveRun((s) => s.devices);
  return (
    <div className="flex flex-col gap-6">
      {status.benches.map((b) => (
        <section key={b.benchId} aria-label={`Bench ${b.benchId}`} data-testid={`bench-${b.benchId}`}>
          <h2 className="mb-2 flex items-center gap-3 text-sm font-semibold tracking-wide text-ink-muted">
            <span className="num normal-case">{b.benchId}</span>
            {b.benchId === status.benchId ? <Badge tone="accent">This server</Badge> : <Badge>Remote (agent or browser)</Badge>}
            {(b.activeRunId ?? b.runId) && <Badge tone="holding">Run in progress</Badge>}
          </h2>
          <div className="grid gap-3 md:grid-cols-2">
            {(['pressure', 'current'] as const).map((d) => {
              const c = b.devices[d];
              const local = b.local?.[d];
              const stream = b.benchId === status.benchId ? live[d] : undefined;
              const connected = stream?.connected ?? local?.connected ?? c?.connected ?? false;
              const q = local?.stats?.queue;
              return (
                <article key={d} className="rounded-card border border-line bg-surface p-4 shadow-card" data-testid={`device-${b.benchId}-${d}`} data-connected={String(connected)}>
                  <div className="flex items-start justify-between gap-2">
                    <div>
                      <h3 className="font-semibold text-ink">{ROLE[d]}</h3>
                      <p className="num text-sm text-ink-muted">{local?.path ?? c?.path ?? 'no port'}</p>
                    </div>
                    <Badge tone={connected ? 'ok' : 'danger'} dot>
                      {connected ? 'Connected' : 'Disconnected'}
                    </Badge>
                  </div>
                  <p className="num mt-3 text-stat text-ink" data-testid={`device-value-${d}`}>
                    {c?.lastValue === null || c?.lastValue === undefined ? '—' : formatNumber(c.lastValue, d === 'current' ? 4 : 4)}{' '}
                    <span className="text-sm font-normal text-ink-muted">{c?.lastUnit ? unitLabel(c.lastUnit) : ''}</span>
                  </p>
                  <dl className="mt-3 grid grid-cols-2 gap-x-4 gap-y-1 text-sm">
                    <dt className="text-ink-muted">Protocol</dt>
                    <dd className="text-ink">{local?.protocol ?? PROTOCOL[d]}</dd>
                    <dt className="text-ink-muted">Baud</dt>
                    <dd className="num text-ink">{local?.baudRate ?? (status.mode === 'sim' ? 'simulated' : '—')}</dd>
                    <dt className="text-ink-muted">Readings</dt>
                    <dd className="num text-ink">{c?.samples ?? 0}</dd>
                    <dt className="text-ink-muted">Bad lines</dt>
                    <dd className={cn('num', (c?.badLines ?? 0) > 0 ? 'text-warn' : 'text-ink')}>{c?.badLines ?? 0}</dd>
                    {(c?.edgeRefused ?? 0) > 0 && (
                      <>
                        <dt className="text-ink-muted">Refused at the edge</dt>
                        <dd className="num text-warn">{c?.edgeRefused}</dd>
                      </>
                    )}
                    {q && (
                      <>
                        <dt className="text-ink-muted">Timeouts</dt>
                        <dd className={cn('num', (q.timeouts ?? 0) > 0 ? 'text-warn' : 'text-ink')}>{q.timeouts ?? 0}</dd>
                      </>
                    )}
                    <dt className="text-ink-muted">Last reading</dt>
                    <dd className="text-ink">{ago(c?.lastWallMs ?? null)}</dd>
                    {!connected && (c?.reason ?? stream?.reason) && (
                      <>
                        <dt className="text-ink-muted">Reason</dt>
                        <dd className="text-danger">{stream?.reason ?? c?.reason}</dd>
                      </>
                    )}
                  </dl>
                </article>
              );
            })}
            {b.local?.hart && <HartModemPanel hart={b.local.hart} />}
          </div>
        </section>
      ))}
    </div>
  );
}
