/**
 * The one text form of a batch of samples: CSV in the column order of
 * `COPY samples (seq, bench_id, device, run_id, raw, value, unit, wall_ms, mono_ms, source_kind,
 * source_id, client_wall_ms) … (FORMAT csv)`.
 * The sample journal stores it and PGlite's COPY reads it, so a batch is serialised once.
 * Text is always quoted (so "" is an empty string) and null is an unquoted empty field, as COPY's
 * CSV format reads them (PostgreSQL documentation, COPY, "CSV Format").
 * Rows of the older 9-column form (before the source columns) still read back, with the defaults
 * of a local port: source `port`, source id the bench id, no client clock.
 */
import type { JournalRow } from './journal';

const csvText = (v: string | null) => (v === null ? '' : `"${v.includes('"') ? v.replaceAll('"', '""') : v}"`);
/** A number as text that reads back to the same double (String() drops the sign of -0). */
const num = (v: number) => (Object.is(v, -0) ? '-0' : String(v));
const csvNum = (v: number | null) => (v === null ? '' : num(v));

const LONE_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

/** Whether a text is well-formed UTF-16 (no lone surrogate), i.e. UTF-8 can carry it unaltered. */
export const wellFormed = (t: string): boolean => !LONE_SURROGATE.test(t);

/** Fields per row now, and in the older form. */
const FIELDS = 12;
const OLD_FIELDS = 9;

/** Rows as CSV, one line per row (a quoted field may itself hold a line break). */
export function samplesCsv(rows: readonly JournalRow[]): string {
  let out = '';
  for (const r of rows) {
    out += `${r.seq},${csvText(r.benchId)},${csvText(r.device)},${csvText(r.runId)},${csvText(r.raw)},${csvNum(r.value)},${csvText(r.unit)},${num(r.wallMs)},${num(r.monoMs)},${csvText(r.sourceKind)},${csvText(r.sourceId)},${csvNum(r.clientWallMs)}\n`;
  }
  return out;
}

/** Reads back what {@link samplesCsv} wrote; throws on anything else (a torn or foreign batch). */
export function parseSamplesCsv(text: string): JournalRow[] {
  const rows: JournalRow[] = [];
  let i = 0;
  const n = text.length;
  /** One field: [value, quoted]. Leaves i on the separator after it. */
  const field = (): [string, boolean] => {
    if (text[i] === '"') {
      let v = '';
      i++;
      for (;;) {
        const q = text.indexOf('"', i);
        if (q === -1) throw new Error('unterminated quoted field');
        v += text.slice(i, q);
        if (text[q + 1] === '"') {
          v += '"';
          i = q + 2;
        } else {
          i = q + 1;
          return [v, true];
        }
      }
    }
    let j = i;
    while (j < n && text[j] !== ',' && text[j] !== '\n') j++;
    const v = text.slice(i, j);
    i = j;
    return [v, false];
  };
  const num = (f: [string, boolean], name: string): number => {
    if (f[1] || f[0] === '') throw new Error(`${name}: a number was expected`);
    const v = Number(f[0]);
    if (Number.isNaN(v) && f[0] !== 'NaN') throw new Error(`${name}: not a number: ${f[0]}`);
    return v;
  };
  const text_ = (f: [string, boolean], name: string, nullable: boolean): string | null => {
    if (f[1]) return f[0];
    if (f[0] === '' && nullable) return null;
    throw new Error(`${name}: a quoted text was expected`);
  };
  while (i < n) {
    const cols: [string, boolean][] = [];
    for (let c = 0; c < FIELDS; c++) {
      cols.push(field());
      const sep = text[i];
      i++;
      if (sep === '\n' && c === OLD_FIELDS - 1) break; // the older form ends here
      if (c < FIELDS - 1 ? sep !== ',' : sep !== '\n') throw new Error(`row ${rows.length + 1}: ${OLD_FIELDS} or ${FIELDS} fields on one line were expected`);
    }
    const value = cols[5]!;
    const benchId = text_(cols[1]!, 'bench_id', false)!;
    const kind = cols.length === FIELDS ? text_(cols[9]!, 'source_kind', false)! : 'port';
    if (kind !== 'port' && kind !== 'agent' && kind !== 'browser') throw new Error(`source_kind: unknown kind ${kind}`);
    const clientWall = cols[11];
    rows.push({
      seq: num(cols[0]!, 'seq'),
      benchId,
      device: text_(cols[2]!, 'device', false)!,
      runId: text_(cols[3]!, 'run_id', true),
      raw: text_(cols[4]!, 'raw', false)!,
      value: value[0] === '' && !value[1] ? null : num(value, 'value'),
      unit: text_(cols[6]!, 'unit', true),
      wallMs: num(cols[7]!, 'wall_ms'),
      monoMs: num(cols[8]!, 'mono_ms'),
      sourceKind: kind,
      sourceId: cols.length === FIELDS ? text_(cols[10]!, 'source_id', false)! : benchId,
      clientWallMs: !clientWall || (clientWall[0] === '' && !clientWall[1]) ? null : num(clientWall, 'client_wall_ms'),
    });
  }
  return rows;
}
