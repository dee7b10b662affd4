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

/** pdftotext (poppler-utils) reads the certificate's text in the record e2e tests. */
function ensurePoppler(): void {
  const has = () => {
    try {
      execFileSync('sh', ['-c', 'command -v pdftotext'], { stdio: 'ignore' });
      return true;
    } catch {
      return false;
    }
  };
  if (has()) return;
  const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;
  if (!isRoot) throw new Error('e2e: pdftotext is missing and this is not root. Install poppler-utils (sudo apt-get install -y poppler-utils) and run again.');
  console.log('[e2e] pdftotext not found: installing poppler-utils with apt-get (one time)…');
  execFileSync('sh', ['-c', 'apt-get install -y poppler-utils || (apt-get update && apt-get install -y poppler-utils)'], { stdio: 'inherit' });
  if (!has()) throw new Error('e2e: apt-get finished but pdftotext is still missing.');
}

/** Newest modification time (ms) of a file or of any file under a folder. */
function newest(p: string): number {
  if (!existsSync(p)) return 0;
  const st = statSync(p);
  if (!st.isDirectory()) return st.mtimeMs;
  let max = st.mtimeMs;
  for (const entry of readdirSync(p)) {
    if (entry === 'node_modules' || entry.startsWith('.') || entry.startsWith('lint-probe-')) continue; // the lint suite's short-lived probes
    max = Math.max(max, newest(path.join(p, entry)));
  }
  return max;
}

/** The server serves dist/; build it once when missing or older than the client sources. */
function ensureClientBuild(): void {
  const built = path.join(root, 'dist', 'index.html');
  const inputs = ['src', 'shared', 'index.html', 'vite.config.ts'].map((p) => path.join(root, p));
  const sourceTime = Math.max(...inputs.map(newest));
  if (existsSync(built) && statSync(built).mtimeMs >= sourceTime) return;
  console.log('[e2e] building the client (npx vite build)…');
  execFileSync('npx', ['vite', 'build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' });
}

export default function setup(): void {
  ensureChromium();
  ensurePoppler();
  ensureClientBuild();
}
