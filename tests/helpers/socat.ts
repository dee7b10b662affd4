/**
 * socat for the pseudo-terminal suites: installed with apt-get when missing and we are root;
 * otherwise the caller fails with the reason (a missing tool never skips a suite silently).
 */
import { execFileSync } from 'node:child_process';
import { findSocat } from '../../simulators/pty-sim';

/** True once socat is on the PATH (installing it when missing and root). */
export async function ensureSocat(): Promise<boolean> {
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
