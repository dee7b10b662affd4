import { Badge } from '../../../components/ui/badge';
import { cn } from '../../../lib/cn';
import type { HartModemStatus } from '../api/get-bench';

const MODEM = { usb: 'USB (keys the carrier itself)', rts: 'RS-232, carrier keyed by RTS' } as const;

function ago(ms: number): string {
  const s = Math.max(0, (Date.now() - ms) / 1000);
  return s < 2 ? 'just now' : s < 120 ? `${Math.round(s)} s ago` : `${Math.round(s / 60)} min ago`;
}

const hex = (n: number, digits: number): string => n.toString(16).toUpperCase().padStart(digits, '0');

/** Counter cell; a count of trouble turns to the warning colour when above zero. */
function Count({ label, value, trouble = true }: { label: string; value: number | undefined; trouble?: boolean }) {
  return (
    <>
      <dt className="text-ink-muted">{label}</dt>
      <dd className={cn('num', trouble && (value ?? 0) > 0 ? 'text-warn' : 'text-ink')}>{value ?? 0}</dd>
    </>
  );
}

/** The bench's HART modem: port, modem type, the transmitter found, the last command, counters and errors. */
export function HartModemPanel({ hart }: { hart: HartModemStatus }) {
  const s = hart.stats;
  return (
    <article className="rounded-card border border-line bg-surface p-4 shadow-card md:col-span-2" data-testid="device-hart" data-connected={String(hart.connected)}>
      <div className="flex flex-wrap items-start justify-between gap-2">
        <div>
          <h3 className="font-semibold text-ink">HART modem (transmitter’s digital signal)</h3>
          <p className="num text-sm text-ink-muted">{hart.path}</p>
        </div>
        <div className="flex flex-wrap gap-2">
          {hart.loopCurrentFixed && (
            <Badge tone="warn" dot>
              Loop current fixed
            </Badge>
          )}
          <Badge tone={hart.connected ? 'ok' : 'danger'} dot>
            {hart.connected ? 'Connected' : 'Disconnected'}
          </Badge>
        </div>
      </div>
      <dl className="mt-3 grid grid-cols-2 gap-x-4 gap-y-1 text-sm md:grid-cols-4">
        <dt className="text-ink-muted">Protocol</dt>
        <dd className="text-ink">{hart.protocol}</dd>
        <dt className="text-ink-muted">Line</dt>
        <dd className="num text-ink">{hart.baudRate} bit/s 8O1</dd>
        <dt className="text-ink-muted">Modem</dt>
        <dd className="text-ink">{MODEM[hart.modem]}</dd>
        <dt className="text-ink-muted">Transmitter</dt>
        <dd className="text-ink" data-testid="hart-device">
          {hart.device ? (
            <>
              device <span className="num">{hex(hart.device.deviceId, 6)}</span> · type <span className="num">{hex(hart.device.expandedDeviceType, 4)}</span> · HART{' '}
              <span className="num">{hart.device.universalRevision}</span>
            </>
          ) : (
            'not found yet'
          )}
        </dd>
        <dt className="text-ink-muted">Last command</dt>
        <dd className={cn('text-ink', hart.lastCommand?.outcome === 'error' && 'text-danger')} data-testid="hart-last-command">
          {hart.lastCommand ? `command ${hart.lastCommand.command} (${hart.lastCommand.name}), ${hart.lastCommand.outcome === 'ok' ? 'answered' : 'failed'} ${ago(hart.lastCommand.at)}` : 'none yet'}
        </dd>
        <dt className="text-ink-muted">Device status</dt>
        <dd className="text-ink">{hart.deviceStatus.length > 0 ? hart.deviceStatus.join(', ') : 'nothing reported'}</dd>
        <Count label="Transactions" value={s.transactions} trouble={false} />
        <Count label="Failed" value={s.errors} />
        <Count label="Retries" value={s.retries} />
        <Count label="Timeouts" value={s.timeouts} />
        <Count label="Checksum errors" value={s.checksumErrors} />
        <Count label="Busy answers" value={s.busy} />
        {hart.lastError && (
          <>
            <dt className="text-ink-muted">Last error</dt>
            <dd className="break-words text-danger md:col-span-3" data-testid="hart-last-error">
              {hart.lastError.message} ({ago(hart.lastError.at)})
            </dd>
          </>
        )}
      </dl>
      <p className="mt-3 text-xs text-ink-muted">
        A HART modem is used from the server’s own port (<span className="num">BENCH_HART_PORT</span>); one connected to this browser through Web Serial is not supported yet.
      </p>
    </article>
  );
}
