/**
 * The driver suite over real pseudo-terminals (socat) and the native serial binding. Setup installs
 * socat with apt-get when it is missing and we are root; otherwise the suite fails with the reason:
 * a missing tool never skips silently.
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { defineDriverSuite, SUITE_RIG } from './serial-driver-suite';
import { findSocat, SOCAT_MISSING, startPtySim } from '../../simulators/pty-sim';
import { defaultBinding } from '../../server/bench/transport';

async function ensureSocat(): Promise<boolean> {
  if (await findSocat()) return true;
  if (process.getuid?.() !== 0) return false;
  try {
    execFileSync('apt-get', ['install', '-y', 'socat'], { stdio: 'ignore', timeout: 120_000 });
  } catch {
    execFileSync('apt-get', ['update'], { stdio: 'ignore', timeout: 120_000 });
    execFileSync('apt-get', ['install', '-y', 'socat'], { stdio: 'ignore', timeout: 120_000 });
  }
  return (await findSocat()) !== undefined;
}

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
