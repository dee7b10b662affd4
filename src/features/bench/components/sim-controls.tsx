import { useState } from 'react';
import { Button } from '../../../components/ui/button';
import { toast } from '../../../components/ui/toast';
import { formatNumber, unitLabel } from '../../../lib/format';
import { useSimControl, useSimSnapshot, type SimControlBody } from '../api/sim';

function Num({ label, value, onChange, step = 0.05, unit, testId }: { label: string; value: string; onChange: (v: string) => void; step?: number; unit: string; testId: string }) {
  return (
    <label className="flex flex-col gap-1 text-sm">
      <span className="text-ink-muted">{label}</span>
      <span className="flex items-center gap-2">
        <input type="number" step={step} value={value} onChange={(e) => onChange(e.target.value)} data-testid={testId} className="num h-9 w-28 rounded-md border border-line-strong bg-surface px-2 text-ink" />
        <span className="text-xs text-ink-faint">{unit}</span>
      </span>
    </label>
  );
}

const PHASE_WORDS: Record<string, string> = { 'pre-position': 'moving to the start side', approach: 'approaching', dwell: 'holding' };

/** Demo mode (admin, BENCH=sim): drive the simulated rig — transmitter errors, noise, leak, overshoot, faults, autopilot. */
export function SimControls() {
  const snap = useSimSnapshot(true);
  const control = useSimControl();
  const t = snap.data?.transmitter;
  const s = snap.data?.sourceConfig;
  const source = (snap.data as { source?: { setpoint?: unknown } } | undefined)?.source;
  const setpointNow = typeof source?.setpoint === 'number' ? source.setpoint : undefined;
  const [form, setForm] = useState<Record<string, string>>({});
  const val = (k: string, current: number | undefined) => form[k] ?? (current === undefined ? '' : String(current));
  const set = (k: string) => (v: string) => setForm((f) => ({ ...f, [k]: v }));
  const n = (k: string, current: number | undefined) => {
    const v = Number(val(k, current));
    return Number.isFinite(v) ? v : 0;
  };
  const send = (body: SimControlBody, done: string) =>
    control.mutate(body, {
      onSuccess: () => {
        setForm({});
        toast(done, { tone: 'success' });
      },
      onError: (e) => toast('The simulator refused', { tone: 'error', description: e instanceof Error ? e.message : undefined }),
    });

  return (
    <section aria-labelledby="sim-title" className="rounded-card border border-dashed border-accent/60 bg-surface p-5 shadow-card" data-testid="sim-controls">
      <h2 id="sim-title" className="text-lg font-semibold text-ink">
        Simulated rig
      </h2>
      <p className="mt-1 text-sm text-ink-muted">
        Demo mode: the bench reads simulated instruments. Now applying{' '}
        <span className="num text-ink">{snap.data ? `${formatNumber(snap.data.appliedDp, 3)} ${unitLabel(snap.data.unit)}` : '—'}</span>, loop{' '}
        <span className="num text-ink">{snap.data ? `${formatNumber(snap.data.currentMa, 3)} mA` : '—'}</span>
        {snap.data?.autopilot && (
          <>
            {' '}
            ·{' '}
            {snap.data.autopilot.phase === 'done' ? (
              'autopilot finished'
            ) : (
              <>
                autopilot at point <span className="num">{Math.min(snap.data.autopilot.index + 1, snap.data.autopilot.points)}</span> of{' '}
                <span className="num">{snap.data.autopilot.points}</span> ({PHASE_WORDS[snap.data.autopilot.phase] ?? snap.data.autopilot.phase})
              </>
            )}
          </>
        )}
      </p>
      <div className="mt-4 grid gap-6 lg:grid-cols-2">
        <fieldset className="flex flex-col gap-3">
          <legend className="text-sm font-semibold text-ink">Transmitter under test</legend>
          <div className="flex flex-wrap gap-4">
            <Num label="Zero error" unit="% span" value={val('zero', t?.zeroErrorPct)} onChange={set('zero')} testId="sim-zero" />
            <Num label="Span error" unit="% span" value={val('span', t?.spanErrorPct)} onChange={set('span')} testId="sim-span" />
            <Num label="Non-linearity" unit="% span" value={val('nl', t?.nonLinearityPct)} onChange={set('nl')} testId="sim-nl" />
            <Num label="Hysteresis" unit="% span" value={val('hys', t?.hysteresisPct)} onChange={set('hys')} testId="sim-hys" />
            <Num label="Output noise" unit="mA 1σ" step={0.001} value={val('noiseMa', t?.outputNoiseMa)} onChange={set('noiseMa')} testId="sim-noise-ma" />
          </div>
          <div className="flex flex-wrap gap-2">
            <Button
              size="sm"
              onClick={() =>
                send(
                  { transmitter: { zeroErrorPct: n('zero', t?.zeroErrorPct), spanErrorPct: n('span', t?.spanErrorPct), nonLinearityPct: n('nl', t?.nonLinearityPct), hysteresisPct: n('hys', t?.hysteresisPct), outputNoiseMa: n('noiseMa', t?.outputNoiseMa) } },
                  'Transmitter updated',
                )
              }
            >
              Apply
            </Button>
            <Button size="sm" variant="secondary" onClick={() => send({ transmitter: { zeroErrorPct: 0, spanErrorPct: 0, nonLinearityPct: 0, hysteresisPct: 0 } }, 'Transmitter trimmed to ideal')}>
              Ideal transmitter
            </Button>
            <Button size="sm" variant="secondary" onClick={() => send({ transmitter: { failure: t?.failure === 'low' ? 'none' : 'low' } }, 'Failure signal changed')}>
              {t?.failure === 'low' ? 'Clear failure signal' : 'Force NE 43 low failure'}
            </Button>
          </div>
        </fieldset>
        <fieldset className="flex flex-col gap-3">
          <legend className="text-sm font-semibold text-ink">Pressure source</legend>
          <div className="flex flex-wrap gap-4">
            <Num label="Pump noise" unit={snap.data?.unit ?? ''} step={0.01} value={val('pnoise', s?.noise)} onChange={set('pnoise')} testId="sim-pump-noise" />
            <Num label="Leak" unit={`${snap.data?.unit ?? ''}/min`} step={0.1} value={val('leak', s?.leakPerMin)} onChange={set('leak')} testId="sim-leak" />
            <Num label="Overshoot" unit="fraction of step" step={0.05} value={val('over', s?.overshoot)} onChange={set('over')} testId="sim-overshoot" />
          </div>
          <div className="flex flex-wrap gap-2">
            <Button size="sm" onClick={() => send({ source: { noise: n('pnoise', s?.noise), leakPerMin: n('leak', s?.leakPerMin), overshoot: n('over', s?.overshoot) } }, 'Source updated')}>
              Apply
            </Button>
            <Button size="sm" variant="secondary" onClick={() => send({ source: { noise: 0, leakPerMin: 0, overshoot: 0 } }, 'Source steady and tight')}>
              Tight and steady
            </Button>
          </div>
        </fieldset>
        <fieldset className="flex flex-col gap-3">
          <legend className="text-sm font-semibold text-ink">Pump setpoint</legend>
          <p className="text-sm text-ink-muted">Move the pump by hand to a pressure (stops the autopilot). Overshoot is the fraction of the step the pump goes past on the way.</p>
          <div className="flex flex-wrap gap-4">
            <Num label="Setpoint" unit={snap.data?.unit ?? ''} step={0.1} value={val('setpoint', setpointNow)} onChange={set('setpoint')} testId="sim-setpoint" />
            <Num label="Overshoot" unit="fraction of step" step={0.05} value={val('spOver', 0)} onChange={set('spOver')} testId="sim-setpoint-overshoot" />
          </div>
          <div className="flex flex-wrap gap-2">
            <Button size="sm" onClick={() => send({ setpoint: { value: n('setpoint', setpointNow), overshoot: Math.max(0, n('spOver', 0)) } }, 'Pump moving to the setpoint')} data-testid="sim-setpoint-go">
              Move the pump
            </Button>
            <Button size="sm" variant="secondary" onClick={() => send({ setpoint: { value: 0 } }, 'Vented to zero')}>
              Vent to zero
            </Button>
          </div>
        </fieldset>
        <fieldset className="flex flex-col gap-3">
          <legend className="text-sm font-semibold text-ink">Faults</legend>
          <div className="flex flex-wrap gap-2">
            {(['pressure', 'current'] as const).map((d) => {
              const plugged = snap.data?.devices[d].plugged ?? true;
              return (
                <Button key={d} size="sm" variant="secondary" onClick={() => send({ faults: { [d]: { unplugged: plugged } } }, plugged ? `${d} device unplugged` : `${d} device plugged back`)} data-testid={`sim-unplug-${d}`}>
                  {plugged ? 'Unplug' : 'Re-plug'} {d === 'pressure' ? 'calibrator' : 'meter'}
                </Button>
              );
            })}
            <Button size="sm" variant="secondary" onClick={() => send({ faults: { current: { burstBytes: 64 } } }, 'Line noise sent')}>
              Line noise burst
            </Button>
          </div>
        </fieldset>
        <fieldset className="flex flex-col gap-3">
          <legend className="text-sm font-semibold text-ink">Autopilot</legend>
          <p className="text-sm text-ink-muted">
            A careful technician at the pump for the bench&apos;s active run: starts at the run&apos;s current point, follows it when you redo a point, approaches from the correct side
            (again after an overshoot) and dwells for the hold.
          </p>
          <div className="flex flex-wrap gap-2">
            <Button size="sm" onClick={() => send({ autopilot: { speed: 4 } }, 'Autopilot started')} data-testid="sim-autopilot">
              Start autopilot
            </Button>
            <Button size="sm" variant="secondary" onClick={() => send({ autopilot: { speed: 4, overshoot: { fraction: 0.3, points: [1] } } }, 'Autopilot with an overshoot at point 2')}>
              With overshoot
            </Button>
            <Button size="sm" variant="secondary" onClick={() => send({ autopilot: { speed: 4, leak: { perMin: 1, points: [1] } } }, 'Autopilot with a leak at point 2')}>
              With leak
            </Button>
            <Button size="sm" variant="ghost" onClick={() => send({ autopilot: 'stop' }, 'Autopilot stopped')}>
              Stop
            </Button>
          </div>
        </fieldset>
      </div>
    </section>
  );
}
