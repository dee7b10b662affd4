/**
 * The HART driver suite over real pseudo-terminals (socat) at 1200 bit/s 8O1 with the native serial
 * binding. Setup installs socat when it is missing and we are root; otherwise the suite fails with
 * the reason: a missing tool never skips silently.
 */
import { describe, expect, it } from 'vitest';
import { defineHartSuite, HART_SUITE_RIG } from './hart-driver-suite';
import { SOCAT_MISSING, startPtySim } from '../../simulators/pty-sim';
import { defaultBinding } from '../../server/bench/transport';
import { ensureSocat } from '../helpers/socat';

const available = await ensureSocat().catch(() => false);

if (available) {
  defineHartSuite('HART driver over socat pseudo-terminals (1200 8O1)', async () => {
    const sim = await startPtySim({ rig: HART_SUITE_RIG });
    return { rig: sim.rig, binding: defaultBinding(), path: sim.hostPaths.hart, teardown: () => sim.stop() };
  }, false);
} else {
  describe('HART driver over socat pseudo-terminals (1200 8O1)', () => {
    it('needs socat, which is missing and could not be installed (run as root, or apt-get install socat)', () => {
      expect.fail(`${SOCAT_MISSING}; this is not root, so the set-up could not install it`);
    });
  });
}

if (available) {
  describe('HART line settings on the pseudo-terminal', () => {
    it('opens the host end at 1200 bit/s, 8 data bits, odd parity asked for, 1 stop bit', async () => {
      const { execFileSync } = await import('node:child_process');
      const { openPort } = await import('../../server/bench/transport');
      const { HART_LINE } = await import('./hart-driver-suite');
      const sim = await startPtySim({ rig: HART_SUITE_RIG });
      const port = openPort({ path: sim.hostPaths.hart, binding: defaultBinding(), ...HART_LINE });
      try {
        await port.open();
        const settings = execFileSync('stty', ['-F', sim.hostPaths.hart, '-a'], { encoding: 'utf8' });
        expect(settings).toMatch(/speed 1200 baud/);
        expect(settings).toMatch(/(^|\s)cs8(\s|$)/);
        // Odd parity was asked for (parodd is set); the Linux pty driver clears PARENB itself, having no
        // bits on a wire to add parity to, so "-parenb" here is the pty's doing, not the port's.
        expect(settings).toMatch(/(^|\s)parodd(\s|$)/);
        expect(settings).toMatch(/(^|\s)-cstopb(\s|$)/);
      } finally {
        await port.close();
        await sim.stop();
      }
    });
  });
}
