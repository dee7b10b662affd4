import { spawnSync } from 'node:child_process';

const has = (cmd: string) => spawnSync('sh', ['-c', `command -v ${cmd}`]).status === 0;

/** pdfinfo, pdffonts and pdftotext come from poppler-utils; install them when we can, else say how. */
export function ensurePoppler(): void {
  if (has('pdfinfo') && has('pdffonts') && has('pdftotext')) return;
  if (process.getuid?.() === 0) {
    const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
    let r = spawnSync('apt-get', ['install', '-y', 'poppler-utils'], { env, encoding: 'utf8' });
    if (r.status !== 0) {
      spawnSync('apt-get', ['update'], { env });
      r = spawnSync('apt-get', ['install', '-y', 'poppler-utils'], { env, encoding: 'utf8' });
    }
    if (r.status === 0 && has('pdffonts')) return;
  }
  throw new Error('These tests need poppler-utils (pdfinfo, pdffonts, pdftotext). Install it: sudo apt-get install -y poppler-utils');
}
