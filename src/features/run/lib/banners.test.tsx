import { cleanup, render } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { BACK_OFF_WINDOWS, backOffTarget } from '../../../../shared/calc/approach';
import type { Run, RunPoint } from '../../../../shared/schemas/runs';
import { buildBanners, type BannerInputs } from './banners';

afterEach(cleanup);

const point = (over: Partial<RunPoint> = {}): RunPoint => ({
  index: 1,
  nominalPct: 50,
  basis: 'flow',
  dpPct: 25,
  targetDp: 25,
  expectedMa: 12,
  approach: 'up',
  window: 0.1,
  state: 'settling',
  flags: [],
  capture: null,
  warning: null,
  ...over,
});
const run = { id: 'run-1' } as Run;
const inputs = (over: Partial<BannerInputs> = {}): BannerInputs => ({
  run,
  current: point(),
  liveWarnings: [],
  devices: { pressure: undefined, current: undefined },
  values: { ne43: 'measurement', unitProblem: null },
  streamStatus: 'open',
  active: true,
  dpDecimals: 2,
  unitLabel: 'kPa',
  ...over,
});
const warning = (kind: 'leak' | 'overshoot' | 'unstable' | 'disconnect' | 'overrange', index: number, runId = 'run-1') => ({ kind, runId, index, message: `${kind} message`, ratePctSpanPerMin: kind === 'leak' ? -0.4 : null, receivedAt: 0 });

describe('buildBanners', () => {
  it('shows nothing when the run is not running or paused', () => {
    expect(buildBanners(inputs({ active: false, liveWarnings: [warning('leak', 1)], streamStatus: 'reconnecting' }))).toEqual([]);
  });

  it("takes the current point's warnings and any disconnect, not other points' or other runs'", () => {
    const b = buildBanners(inputs({ liveWarnings: [warning('leak', 1), warning('unstable', 0), warning('disconnect', 3), warning('overrange', 1, 'run-2')] }));
    expect(b.map((x) => x.kind)).toEqual(['disconnect', 'leak']);
    expect(b[1]!.rate).toBe(-0.4);
    expect(b[1]!.action).toBe('Check the fittings, the tubing and the manifold valves.');
  });

  it('falls back on the point flags when the page opened after the warning went out', () => {
    const b = buildBanners(inputs({ current: point({ flags: ['leak', 'overshoot'], warning: 'Leak at point 2' }) }));
    expect(b.map((x) => x.kind)).toEqual(['leak', 'overshoot']);
    expect(b[0]!.message).toBe('Leak at point 2');
    expect(b[0]!.rate).toBeNull();
  });

  it('tells an overshoot on the way up to go back below the target by three windows and come up again', () => {
    const [over] = buildBanners(inputs({ liveWarnings: [warning('overshoot', 1)] }));
    expect(over!.message).toBe('The applied DP went past the target of point 2 on the approach.');
    const { container } = render(<>{over!.action}</>);
    expect(container.textContent).toBe('Re-approach from below: go back to about 24.7 kPa, then raise the pressure slowly to the target without passing it.');
  });

  it('sends an overshoot on the way down above the target, to the back-off target the engine uses', () => {
    const current = point({ approach: 'down', targetDp: 40, window: 0.25 });
    const [over] = buildBanners(inputs({ current, liveWarnings: [warning('overshoot', 1)] }));
    const { container } = render(<>{over!.action}</>);
    // The one rule (shared/calc/approach.ts): BACK_OFF_WINDOWS windows past the target on the approach side.
    expect(BACK_OFF_WINDOWS).toBe(3);
    expect(backOffTarget(current)).toBe(40.75);
    expect(container.textContent).toBe('Re-approach from above: go back to about 40.75 kPa, then lower the pressure slowly to the target without passing it.');
  });

  it('adds what the page sees itself, most urgent first', () => {
    const b = buildBanners(
      inputs({
        liveWarnings: [warning('overrange', 1)],
        devices: { pressure: { connected: false, path: '/dev/ttyUSB0', reason: 'cable pulled', at: 1 }, current: undefined },
        values: { ne43: 'failure-low', unitProblem: 'The calibrator reports psi' },
        streamStatus: 'reconnecting',
      }),
    );
    expect(b.map((x) => x.kind)).toEqual(['overrange', 'disconnect', 'ne43', 'unit', 'stream']);
    expect(b[1]!.message).toBe('Pressure calibrator on /dev/ttyUSB0: cable pulled. The hold restarts when it is back.');
  });
});
