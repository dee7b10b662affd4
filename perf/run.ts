/**
 * `npm run bench`: runs every `perf/*.bench.ts` (each exports `run()` returning figures) and
 * prints one table. `npm run bench -- calc` runs only the files whose name contains "calc".
 */
import fs from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';

interface Figure {
  name: string;
  value: number;
  unit: string;
  target?: string;
  ok?: boolean;
}

const dir = import.meta.dirname;
const filter = process.argv[2];
const files = fs
  .readdirSync(dir)
  .filter((f) => f.endsWith('.bench.ts') && (!filter || f.includes(filter)))
  .sort();
const rows: (Figure & { file: string })[] = [];
const t0 = performance.now();
for (const f of files) {
  const started = performance.now();
  process.stderr.write(`running ${f} ...\n`);
  const mod = (await import(pathToFileURL(path.join(dir, f)).href)) as { run?: () => Promise<Figure[]> };
  if (typeof mod.run !== 'function') {
    process.stderr.write(`  ${f} exports no run(); skipped\n`);
    continue;
  }
  try {
    for (const fig of await mod.run()) rows.push({ file: f, ...fig });
  } catch (e) {
    rows.push({ file: f, name: `FAILED: ${(e as Error).message}`, value: NaN, unit: '', ok: false });
  }
  process.stderr.write(`  ${f} took ${((performance.now() - started) / 1000).toFixed(1)} s\n`);
}
const fmt = (v: number) => (Number.isInteger(v) ? v.toLocaleString('en') : v.toPrecision(4));
console.log('');
console.table(rows.map((r) => ({ file: r.file, figure: r.name, value: fmt(r.value), unit: r.unit, target: r.target ?? '', ok: r.ok === undefined ? '' : r.ok ? 'yes' : 'NO' })));
console.log(`total ${((performance.now() - t0) / 1000).toFixed(1)} s`);
process.exit(0);
