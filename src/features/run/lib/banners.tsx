/**
 * The capture screen's warning banners: the run's live warnings for the current point (a
 * disconnect whatever the point), the point's own flags when the page opened mid-point, and what
 * the client sees itself (a device down, NE 43, a unit it cannot convert, the stream reconnecting),
 * one banner per kind, most urgent first, each with what to do where there is something to do.
 */
import type { ReactNode } from 'react';
import { backOffTarget } from '../../../../shared/calc/approach';
import type { Run, RunPoint } from '../../../../shared/schemas/runs';
import { formatNumber } from '../../../lib/format';
import type { LiveStatus } from '../../../lib/live-stream';
import type { useLiveRun } from '../../../stores/live-run';
import { ne43Problem, type LiveValues } from './live-values';

export type BannerKind = 'leak' | 'overshoot' | 'unstable' | 'disconnect' | 'ne43' | 'clock' | 'unit' | 'stream' | 'overrange';

export interface BannerItem {
  kind: BannerKind;
  message: string;
  /** Leak rate, % of span per minute. */
  rate?: number | null;
  /** What the technician should do. */
  action?: ReactNode;
}

/** Most urgent first. */
const ORDER: BannerKind[] = ['overrange', 'disconnect', 'leak', 'overshoot', 'ne43', 'unstable', 'clock', 'unit', 'stream'];

export interface BannerInputs {
  run: Run;
  current: RunPoint | null;
  liveWarnings: ReturnType<typeof useLiveRun.getState>['warnings'];
  devices: ReturnType<typeof useLiveRun.getState>['devices'];
  values: Pick<LiveValues, 'ne43' | 'unitProblem'>;
  streamStatus: LiveStatus;
  /** The run is running or paused (no banners otherwise). */
  active: boolean;
  dpDecimals: number;
  unitLabel: string;
}

export function buildBanners({ run, current, liveWarnings, devices, values, streamStatus, active, dpDecimals, unitLabel }: BannerInputs): BannerItem[] {
  if (!active) return [];
  const out = new Map<BannerItem['kind'], BannerItem>();
  for (const w of liveWarnings) {
    if (w.runId !== run.id) continue;
    if (w.kind !== 'disconnect' && w.index !== current?.index) continue;
    out.set(w.kind, { kind: w.kind, message: w.message, rate: w.ratePctSpanPerMin });
  }
  // Opened mid-point (the warning went out before this page connected): fall back on the point's flags.
  if (current && (current.state === 'approaching' || current.state === 'settling')) {
    if (current.flags.includes('leak') && !out.has('leak') && current.state === 'settling')
      out.set('leak', { kind: 'leak', message: current.warning ?? 'The applied DP moves with the source isolated.', rate: null });
    if (current.flags.includes('overshoot') && !out.has('overshoot'))
      out.set('overshoot', { kind: 'overshoot', message: `The applied DP went past the target of point ${current.index + 1} on the approach.` });
  }
  const leak = out.get('leak');
  if (leak) leak.action = 'Check the fittings, the tubing and the manifold valves.';
  const over = out.get('overshoot');
  if (over && current) {
    // The action below says where to go and from which side; the message only says what happened.
    over.message = `The applied DP went past the target of point ${current.index + 1} on the approach.`;
    const side = current.approach === 'up' ? 'below' : 'above';
    const past = backOffTarget(current);
    over.action = (
      <>
        Re-approach from {side}: go back to about <span className="num">{formatNumber(past, dpDecimals)}</span> {unitLabel}, then {current.approach === 'up' ? 'raise' : 'lower'} the
        pressure slowly to the target without passing it.
      </>
    );
  }
  for (const d of ['pressure', 'current'] as const) {
    const link = devices[d];
    if (link && !link.connected && !out.has('disconnect'))
      out.set('disconnect', { kind: 'disconnect', message: `${d === 'pressure' ? 'Pressure calibrator' : 'Current meter'} on ${link.path ?? 'its port'}: ${link.reason ?? 'connection lost'}. The hold restarts when it is back.` });
  }
  const ne = ne43Problem(values.ne43);
  if (ne && !out.has('ne43')) out.set('ne43', { kind: 'ne43', message: ne });
  if (values.unitProblem) out.set('unit', { kind: 'unit', message: values.unitProblem });
  if (streamStatus === 'reconnecting') out.set('stream', { kind: 'stream', message: 'The live connection to the bench dropped; reconnecting and catching up. Captures continue on the server.' });
  return ORDER.flatMap((k) => (out.has(k) ? [out.get(k)!] : []));
}
