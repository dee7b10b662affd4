import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

// The global set-up has run `vite build` into dist/ (tests/e2e/global-setup.ts).
const dist = path.resolve('dist');

function walk(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? walk(path.join(dir, e.name)) : [path.join(dir, e.name)]));
}

describe('the production build is self-contained', () => {
  const files = walk(dist);

  it('holds no source maps and points to none (they would publish the source; issue 14)', () => {
    expect(files.filter((f) => f.endsWith('.map'))).toEqual([]);
    for (const f of files.filter((x) => x.endsWith('.js'))) expect(fs.readFileSync(f, 'utf8'), path.basename(f)).not.toMatch(/sourceMappingURL=/);
  });

  it('bundles Inter and JetBrains Mono', () => {
    const fonts = files.filter((f) => /\.(woff2?|ttf)$/.test(f)).map((f) => path.basename(f));
    expect(fonts.some((f) => /^inter-/i.test(f))).toBe(true);
    expect(fonts.some((f) => /^jetbrains-mono-/i.test(f))).toBe(true);
  });

  it('loads no font, style or script from another host', () => {
    const offenders: string[] = [];
    for (const f of files.filter((x) => /\.(html|css)$/.test(x))) {
      const text = fs.readFileSync(f, 'utf8');
      // Any absolute URL in HTML or CSS would be a request leaving the machine.
      for (const m of text.matchAll(/(?:src|href)\s*=\s*["']?(https?:)?\/\/[^"'\s>]+|url\(\s*["']?(?:https?:)?\/\/[^)]+\)|@import\s+["']?(?:https?:)?\/\//g)) offenders.push(`${path.basename(f)}: ${m[0]}`);
    }
    for (const f of files.filter((x) => x.endsWith('.js'))) {
      const text = fs.readFileSync(f, 'utf8');
      for (const host of ['fonts.googleapis.com', 'fonts.gstatic.com', 'cdn.jsdelivr.net', 'unpkg.com', 'cdnjs.cloudflare.com', 'rsms.me']) {
        if (text.includes(host)) offenders.push(`${path.basename(f)}: ${host}`);
      }
    }
    expect(offenders).toEqual([]);
  });
});
