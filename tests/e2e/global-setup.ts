import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '../..');
const CHROMIUM = '/usr/bin/chromium';

function ensureChromium(): void {
  if (existsSync(CHROMIUM)) return;
  const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
  if (!isRoot) {
    throw new Error(
      `e2e: ${CHROMIUM} is missing and this is not root. Install Debian's Chromium (sudo apt-get install -y chromium) and run again.`,
    );
  }
  console.log(`[e2e] ${CHROMIUM} not found: installing Debian's chromium with apt-get (one time, may take a few minutes)…`);
  execFileSync('sh', ['-c', 'apt-get update && apt-get install -y chromium'], { stdio: 'inherit' });
  if (!existsSync(CHROMIUM)) throw new Error(`e2e: apt-get finished but ${CHROMIUM} is still missing.`);
}

/** Newest modification time (ms) of a file or of any file under a folder. */
function newest(p: string): number {
  if (!existsSync(p)) return 0;
  const st = statSync(p);
  if (!st.isDirectory()) return st.mtimeMs;
  let max = st.mtimeMs;
  for (const entry of readdirSync(p)) {
    if (entry === 'node_modules' || entry.startsWith('.')) continue;
    max = Math.max(max, newest(path.join(p, entry)));
  }
  return max;
}

/** The server serves dist/; build it once when missing or older than the client sources. */
function ensureClientBuild(): void {
  const built = path.join(root, 'dist', 'index.html');
  const inputs = ['src', 'shared', 'index.html', 'tailwind.config.ts', 'vite.config.ts'].map((p) => path.join(root, p));
  const sourceTime = Math.max(...inputs.map(newest));
  if (existsSync(built) && statSync(built).mtimeMs >= sourceTime) return;
  console.log('[e2e] building the client (npx vite build)…');
  execFileSync('npx', ['vite', 'build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' });
}

export default function setup(): void {
  ensureChromium();
  ensureClientBuild();
}
