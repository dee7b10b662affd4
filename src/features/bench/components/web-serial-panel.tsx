import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { toast } from '../../../components/ui/toast';
import { formatNumber, unitLabel } from '../../../lib/format';
import { getLiveStream, useLiveStream } from '../../../lib/live-stream';
import { useWebSerial, webSerial, type Device, type StreamLink } from '../web-serial/serial-bridge';

const BAUDS = [9600, 19200, 38400, 57600, 115200];
const NAME: Record<Device, string> = { pressure: 'Pressure calibrator', current: 'Current meter' };

/**
 * "Connect in this browser": where the browser has Web Serial, read the two instruments here and
 * forward their lines to the bench hub; elsewhere, say so and point to the server bridge.
 */
export function WebSerialPanel({ ownBench }: { ownBench: string | null }) {
  const queryClient = useQueryClient();
  const streamStatus = useLiveStream(queryClient);
  const serial = webSerial();
  const state = useWebSerial((s) => s.state);
  const benchId = useWebSerial((s) => s.benchId);
  const [baud, setBaud] = useState<Record<Device, number>>({ pressure: 9600, current: 9600 });
  const [busy, setBusy] = useState<Device | null>(null);
  // The lines feed this user's own browser bench (the server refuses any other).
  useEffect(() => {
    useWebSerial.getState().setBenchId(ownBench);
  }, [ownBench]);

  if (!serial) {
    return (
      <section aria-labelledby="webserial-title" className="rounded-card border border-line bg-surface p-5 shadow-card" data-testid="web-serial-unavailable">
        <h2 id="webserial-title" className="text-lg font-semibold text-ink">
          Connect in this browser
        </h2>
        <p className="mt-1 text-sm text-ink-muted">
          This browser has no Web Serial, so it cannot open the instruments&apos; ports itself (Web Serial needs a Chromium-based browser on a secure or local page). Connect the
          instruments to the bench PC instead: the server bridge reads them there (<span className="num">BENCH=serial</span>, or <span className="num">npm run agent</span> on a bench PC that
          feeds this server).
        </p>
      </section>
    );
  }

  if (!ownBench) {
    return (
      <section aria-labelledby="webserial-title" className="rounded-card border border-line bg-surface p-5 shadow-card" data-testid="web-serial-not-technician">
        <h2 id="webserial-title" className="text-lg font-semibold text-ink">
          Connect in this browser
        </h2>
        <p className="mt-1 text-sm text-ink-muted">Only technicians read instruments in the browser: their lines feed their own browser bench and the runs they perform.</p>
      </section>
    );
  }

  const connect = async (device: Device) => {
    setBusy(device);
    try {
      const port = await serial.requestPort();
      const live = getLiveStream();
      const link: StreamLink = {
        send: (m) => live.send(m),
        subscribe: (l) => live.subscribe(l),
        watchOpen: (l) => {
          const tell = () => l(live.getStatus() === 'open');
          tell();
          return live.subscribeStatus(tell);
        },
      };
      const bridge = useWebSerial.getState().ensure(link);
      await bridge.connect(device, port, baud[device]);
      toast(`${NAME[device]} connected in this browser`, { tone: 'success' });
    } catch (e) {
      if (!(e instanceof DOMException && e.name === 'NotFoundError')) toast(`Could not open the ${NAME[device].toLowerCase()}`, { tone: 'error', description: e instanceof Error ? e.message : undefined });
    } finally {
      setBusy(null);
    }
  };

  return (
    <section aria-labelledby="webserial-title" className="rounded-card border border-line bg-surface p-5 shadow-card" data-testid="web-serial">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h2 id="webserial-title" className="text-lg font-semibold text-ink">
            Connect in this browser
          </h2>
          <p className="mt-1 max-w-prose text-sm text-ink-muted">
            Plug the calibrator and the meter into this computer and read them here with Web Serial. Their lines go to the bench hub as bench{' '}
            <span className="num text-ink" data-testid="browser-bench-id">{benchId ?? ownBench}</span>, which only you can feed; runs you start while both are connected use it, and
            the server keeps every line until it has stored it.
          </p>
        </div>
        <Badge tone={streamStatus === 'open' ? 'ok' : 'warn'} dot>
          {streamStatus === 'open' ? 'Forwarding' : 'Stream offline'}
        </Badge>
      </div>
      <div className="mt-4 grid gap-3 md:grid-cols-2">
        {(['pressure', 'current'] as const).map((d) => {
          const st = state?.devices[d];
          return (
            <div key={d} className="rounded-md border border-line p-4" data-testid={`web-serial-${d}`} data-connected={String(!!st?.connected)}>
              <div className="flex items-center justify-between gap-2">
                <p className="font-medium text-ink">{NAME[d]}</p>
                {st?.connected ? <Badge tone="ok">Open</Badge> : <Badge>Not connected</Badge>}
              </div>
              <p className="mt-1 text-xs text-ink-muted">{d === 'current' ? 'SCPI: READ? for DC current' : 'Calibrator line profile: query and reply pattern'}</p>
              {st?.connected ? (
                <>
                  <p className="num mt-2 text-stat text-ink" data-testid={`web-serial-value-${d}`}>
                    {st.lastValue === null ? '—' : formatNumber(st.lastValue, 4)} <span className="text-sm font-normal text-ink-muted">{st.lastUnit ? unitLabel(st.lastUnit) : ''}</span>
                  </p>
                  <p className="num mt-1 text-xs text-ink-muted">
                    {st.baudRate} baud · {st.samples} readings · {st.rejected} rejected
                  </p>
                  <Button size="sm" variant="ghost" className="mt-2" onClick={() => void useWebSerial.getState().bridge?.disconnect(d)}>
                    Disconnect
                  </Button>
                </>
              ) : (
                <div className="mt-3 flex flex-wrap items-end gap-2">
                  <label className="flex flex-col gap-1 text-xs text-ink-muted">
                    Baud
                    <select className="num h-8 rounded-md border border-line-strong bg-surface px-2 text-sm text-ink" value={baud[d]} onChange={(e) => setBaud((b) => ({ ...b, [d]: Number(e.target.value) }))}>
                      {BAUDS.map((b) => (
                        <option key={b} value={b}>
                          {b}
                        </option>
                      ))}
                    </select>
                  </label>
                  <Button size="sm" onClick={() => void connect(d)} loading={busy === d} data-testid={`web-serial-connect-${d}`}>
                    Choose port…
                  </Button>
                </div>
              )}
              {st?.error && <p className="mt-2 text-sm text-danger">{st.error}</p>}
            </div>
          );
        })}
      </div>
      {state && (
        <p className="num mt-3 text-xs text-ink-muted" data-testid="web-serial-forwarded">
          {state.forwarded} lines stored{state.unsent ? ` · ${state.unsent} lines waiting to be stored` : ''}
          {state.refused ? ` · ${state.refused} batches refused${state.lastRefusal ? `: ${state.lastRefusal}` : ''}` : ''}
        </p>
      )}
    </section>
  );
}
