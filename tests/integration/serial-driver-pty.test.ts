/**
 * The driver suite over real pseudo-terminals (socat) and the native serial binding. Setup installs
 * socat with apt-get when it is missing and we are root; otherwise the suite fails with the reason:
 * a missing tool never skips silently.
 */
import { describe, expect, it } from 'vitest';
import { defineDriverSuite, SUITE_RIG } from './serial-driver-suite';
import { SOCAT_MISSING, startPtySim } from '../../simulators/pty-sim';
import { ensureSocat } from '../helpers/socat';
import { defaultBinding } from '../../server/bench/transport';

const available = await ensureSocat().catch(() => false);

if (available) {
  defineDriverSuite('drivers over socat pseudo-terminals', async () => {
    const sim = await startPtySim({ rig: SUITE_RIG });
    return { rig: sim.rig, binding: defaultBinding(), paths: sim.hostPaths, teardown: () => sim.stop() };
  });
} else {
  describe('drivers over socat pseudo-terminals', () => {
    it('needs socat, which is missing and could not be installed (run as root, or apt-get install socat)', () => {
      expect.fail(`${SOCAT_MISSING}; this is not root, so the set-up could not install it`);
    });
  });
}
