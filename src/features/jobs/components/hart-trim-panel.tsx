import { useState } from 'react';
import type { HartTrim } from '../../../../shared/schemas/hart-job';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { Dialog } from '../../../components/ui/dialog';
import { formatFixed, formatSigned } from '../../../lib/format';
import { useHartTrimAction, useJobHartLive } from '../api/job-hart';

const STATUS_TONE = { running: 'holding', done: 'ok', failed: 'danger', aborted: 'warn' } as const;

function TrimResult({ t }: { t: HartTrim }) {
  return (
    <div className="flex flex-col gap-1 text-sm" data-testid={`hart-trim-${t.kind}`}>
      <p>
        <span className="font-medium">{t.kind === 'output-trim' ? 'Output (loop current) trim' : 'Zero trim (command 43)'}</span>{' '}
        <Badge tone={STATUS_TONE[t.status]}>{t.status}</Badge> <span className="text-ink-muted">{t.step}</span>
      </p>
      {t.error && <p className="text-danger">{t.error.charAt(0).toUpperCase() + t.error.slice(1)}.</p>}
      {t.readings.length > 0 && (
        <table className="w-fit text-sm">
          <thead className="text-xs text-ink-muted">
            <tr>
              <th className="px-2 text-left">Stage</th>
              <th className="px-2 text-right">Fixed at mA</th>
              <th className="px-2 text-right">Meter mA</th>
              <th className="px-2 text-right">Error mA</th>
            </tr>
          </thead>
          <tbody>
            {t.readings.map((r, i) => (
              <tr key={i} data-testid={`hart-trim-reading-${r.stage}-${r.fixedMa}`}>
                <td className="px-2">{r.stage === 'trim' ? 'trim' : 'verify'}</td>
                <td className="num px-2 text-right">{formatFixed(r.fixedMa, 1)}</td>
                <td className="num px-2 text-right">{formatFixed(r.meterMa, 4)}</td>
                <td className="num px-2 text-right">{formatSigned(r.errorMa, 4)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}

/**
 * Trims by HART command: the hands-free output trim (after the cautions), with a visible "loop
 * current fixed" state and an abort; the zero trim with zero pressure held. The device's own sensor
 * trim points (commands 80–83) are not offered: the guided trims above stay for the sensor.
 */
export function HartTrimPanel({ jobId, canAct }: { jobId: string; canAct: boolean }) {
  const hart = useJobHartLive(jobId);
  const act = useHartTrimAction(jobId);
  const [confirm, setConfirm] = useState<'output-trim' | 'zero-trim' | null>(null);
  const [checks, setChecks] = useState({ manual: false, informed: false, zero: false });
  const h = hart.data;
  if (!h?.available) return null;
  const running = h.trims.at(-1)?.status === 'running';
  const ready = confirm === 'output-trim' ? checks.manual && checks.informed : checks.zero;
  return (
    <section aria-label="Trims by HART command" className="flex flex-col gap-3 rounded-md border border-line p-3" data-testid="hart-trim-panel">
      <h3 className="text-sm font-semibold text-ink">Trims by HART command</h3>
      {h.loopCurrentFixed && (
        <p role="status" className="rounded-md border border-danger/50 bg-danger-soft px-3 py-2 font-semibold text-danger" data-testid="loop-current-fixed">
          Loop current fixed{h.trims.at(-1)?.fixedMa != null ? ` at ${formatFixed(h.trims.at(-1)!.fixedMa!, 1)} mA` : ''}: the loop does not follow the process
        </p>
      )}
      {h.trims.map((t) => (
        <TrimResult key={t.id} t={t} />
      ))}
      {act.error && (
        <p role="alert" className="text-sm text-danger">
          {act.error.message}
        </p>
      )}
      {canAct && (
        <div className="flex flex-wrap gap-2">
          {running ? (
            <Button variant="danger" size="sm" loading={act.isPending} onClick={() => act.mutate('abort')} data-testid="hart-trim-abort">
              Abort the trim (leaves fixed current)
            </Button>
          ) : (
            <>
              <Button size="sm" onClick={() => setConfirm('output-trim')} data-testid="hart-output-trim">
                Trim the output (hands-free)…
              </Button>
              <Button variant="secondary" size="sm" onClick={() => setConfirm('zero-trim')} data-testid="hart-zero-trim">
                Zero trim by command…
              </Button>
            </>
          )}
        </div>
      )}
      <p className="text-xs text-ink-muted" data-testid="hart-sensor-trim">
        {h.asFound?.sensorTrim === 'no'
          ? 'The device does not offer sensor trim points (command 80 is not implemented): use the guided trims above for the sensor.'
          : h.asFound?.sensorTrim === 'yes'
            ? 'The device offers sensor trim points (commands 80–83); Stillpoint does not send them yet: use the guided trims above for the sensor.'
            : 'Sensor trims by command (80–83) are not offered here: use the guided trims above for the sensor.'}
      </p>
      <Dialog
        open={confirm !== null}
        onClose={() => setConfirm(null)}
        title={confirm === 'output-trim' ? 'Trim the output by HART' : 'Zero trim by HART'}
        description={
          confirm === 'output-trim'
            ? 'The loop current is fixed at 4, 20 and 12 mA in turn: it no longer follows the process. Follow your site’s procedures.'
            : 'The device takes the pressure it senses now as zero. Both sides vented or equalised; follow your site’s procedures.'
        }
      >
        <div className="flex flex-col gap-2 text-sm">
          {confirm === 'output-trim' ? (
            <>
              <label className="flex gap-2">
                <input type="checkbox" checked={checks.manual} onChange={(e) => setChecks({ ...checks, manual: e.target.checked })} data-testid="confirm-loop-manual" />
                The loop is in manual (its output is not used for control or trips)
              </label>
              <label className="flex gap-2">
                <input type="checkbox" checked={checks.informed} onChange={(e) => setChecks({ ...checks, informed: e.target.checked })} data-testid="confirm-operators-informed" />
                The operators are informed that the loop current will move
              </label>
            </>
          ) : (
            <label className="flex gap-2">
              <input type="checkbox" checked={checks.zero} onChange={(e) => setChecks({ ...checks, zero: e.target.checked })} data-testid="confirm-zero-held" />
              Zero pressure is applied and held
            </label>
          )}
          <div className="flex justify-end gap-2 pt-2">
            <Button variant="secondary" onClick={() => setConfirm(null)}>
              Cancel
            </Button>
            <Button
              disabled={!ready}
              data-testid="hart-trim-confirm"
              onClick={() => {
                act.mutate(confirm!);
                setConfirm(null);
                setChecks({ manual: false, informed: false, zero: false });
              }}
            >
              {confirm === 'output-trim' ? 'Start the output trim' : 'Send the zero trim'}
            </Button>
          </div>
        </div>
      </Dialog>
    </section>
  );
}
