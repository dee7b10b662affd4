/**
 * The sample journal on disk: what is appended (and synced) reads back exactly, whatever the raw
 * line holds; a batch cut short by a crash is ignored; the older one-JSON-line form still reads.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { afterEach, describe, expect, it } from 'vitest';
import zlib from 'node:zlib';
import { scanJournal, SampleJournal, type JournalRow } from './journal';
import { parseSamplesCsv, samplesCsv } from './samples-csv';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});
async function openJournal(): Promise<SampleJournal> {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-journal-'));
  dirs.push(d);
  const j = new SampleJournal(d);
  await j.open();
  return j;
}

const row = (seq: number, over: Partial<JournalRow> = {}): JournalRow => ({
  seq,
  benchId: 'b1',
  device: 'pressure',
  runId: null,
  raw: `DP +${seq}.00000 inH2O@68F`,
  value: seq / 3,
  unit: 'inH2O@68F',
  wallMs: 1.7e12 + seq + 0.125,
  monoMs: seq * 1.5,
  sourceKind: 'port',
  sourceId: 'b1',
  clientWallMs: null,
  ...over,
});

const arbRow = fc.record({
  seq: fc.integer({ min: 1, max: 2 ** 40 }),
  benchId: fc.string(),
  device: fc.constantFrom('pressure', 'current'),
  runId: fc.option(fc.uuid(), { nil: null }),
  raw: fc.string({ unit: 'binary' }),
  value: fc.option(fc.double(), { nil: null }),
  unit: fc.option(fc.string(), { nil: null }),
  wallMs: fc.double({ noNaN: true, noDefaultInfinity: true }),
  monoMs: fc.double({ noNaN: true, noDefaultInfinity: true }),
  sourceKind: fc.constantFrom('port' as const, 'agent' as const, 'browser' as const),
  sourceId: fc.string(),
  clientWallMs: fc.option(fc.double({ noNaN: true, noDefaultInfinity: true }), { nil: null }),
});

describe('samples CSV', () => {
  it('reads back exactly what it wrote, for any text and number (fast-check)', () => {
    fc.assert(
      fc.property(fc.array(arbRow, { maxLength: 20 }), (rows) => {
        expect(parseSamplesCsv(samplesCsv(rows))).toEqual(rows);
      }),
      { numRuns: 300 },
    );
  });

  it('keeps null apart from the empty string, and NaN and infinities as numbers', () => {
    const rows = [row(1, { raw: '', unit: null, value: null }), row(2, { unit: '', value: Number.NaN }), row(3, { value: -Infinity, raw: 'a,"b"\nc' })];
    expect(parseSamplesCsv(samplesCsv(rows))).toEqual(rows);
  });

  it('refuses text that is not its own form', () => {
    expect(() => parseSamplesCsv('1,"b1","pressure",,"x",1,"u",2\n')).toThrow(/fields/);
    expect(() => parseSamplesCsv('1,b1,"pressure",,"x",1,"u",2,3\n')).toThrow(/quoted/);
    expect(() => parseSamplesCsv('1,"b1","pressure",,"x,1,"u",2,3\n')).toThrow();
  });
});

describe('SampleJournal', () => {
  it('reads back every synced batch in order', async () => {
    const j = await openJournal();
    await j.append([row(1), row(2, { raw: 'quote " comma , line\nbreak' })]);
    await j.append([row(3, { runId: '11111111-1111-4111-8111-111111111111', value: null })]);
    const csv = new TextEncoder().encode(samplesCsv([row(4), row(5)]));
    await j.appendCsv(csv, 2);
    expect(await j.read()).toEqual([row(1), row(2, { raw: 'quote " comma , line\nbreak' }), row(3, { runId: '11111111-1111-4111-8111-111111111111', value: null }), row(4), row(5)]);
    expect(j.size).toBe(fs.statSync(j.file).size);
    await j.close();
  });

  it('ignores a last batch cut short by a crash (bytes missing, or a block of zeros never written)', async () => {
    const j = await openJournal();
    await j.append([row(1), row(2)]);
    await j.close();
    const whole = fs.readFileSync(j.file);
    // A second batch whose bytes were only partly written.
    const second = Buffer.concat([Buffer.from(`#batch 500 3 00000000\n`), Buffer.from(samplesCsv([row(3)]))]);
    fs.writeFileSync(j.file, Buffer.concat([whole, second]));
    expect(scanJournal(fs.readFileSync(j.file))).toMatchObject({ damaged: [], tornBytes: second.length });
    // A header cut short.
    fs.writeFileSync(j.file, Buffer.concat([whole, Buffer.from('#bat')]));
    expect(scanJournal(fs.readFileSync(j.file))).toMatchObject({ damaged: [], tornBytes: 4 });
    // The right length, but the end is zeros: the file grew before its block was written.
    const csv = Buffer.from(samplesCsv([row(3)]));
    const zeroed = Buffer.concat([Buffer.from(`#batch ${csv.length} 1 ${zlib.crc32(csv).toString(16).padStart(8, '0')}\n`), csv.subarray(0, 10), Buffer.alloc(csv.length - 10)]);
    fs.writeFileSync(j.file, Buffer.concat([whole, zeroed]));
    const scan = scanJournal(fs.readFileSync(j.file));
    expect(scan.rows.map((r) => r.seq)).toEqual([1, 2]);
    expect(scan).toMatchObject({ damaged: [], tornBytes: zeroed.length });
    const rec = await j.recover();
    expect(rec.damaged).toEqual([]);
  });

  it('sets a damaged batch in the middle aside into a named file and still reads every intact batch around it (finding 12)', async () => {
    const j = await openJournal();
    await j.append([row(1), row(2)]);
    await j.append([row(3), row(4)]);
    await j.append([row(5)]);
    await j.close();
    const buf = fs.readFileSync(j.file);
    // Flip one byte inside the second batch's CSV: its checksum no longer matches.
    const second = buf.indexOf('#batch', 1);
    const at = buf.indexOf('DP +3', second) + 4;
    const damagedBytes = Buffer.from(buf);
    damagedBytes[at] = '9'.charCodeAt(0);
    fs.writeFileSync(j.file, damagedBytes);
    expect((await j.read()).map((r) => r.seq)).toEqual([1, 2, 5]);
    const rec = await j.recover();
    expect(rec.rows.map((r) => r.seq)).toEqual([1, 2, 5]);
    expect(rec.damaged).toHaveLength(1);
    expect(rec.damaged[0]!.reason).toMatch(/checksum mismatch/);
    // The bytes set aside are exactly the damaged batch, in a file named after the journal.
    const third = damagedBytes.indexOf('#batch', second + 1);
    const aside = fs.readFileSync(path.join(path.dirname(j.file), rec.damaged[0]!.file));
    expect(aside.equals(damagedBytes.subarray(second, third))).toBe(true);
    expect(rec.damaged[0]!.file).toMatch(/^samples\.journal\.damaged-/);
    expect(await j.damagedBatches()).toEqual(rec.damaged);
    expect(await j.acknowledgeDamaged('user-1')).toBe(1);
    expect((await j.damagedBatches())[0]).toMatchObject({ acknowledgedBy: 'user-1' });
    expect(await j.acknowledgeDamaged('user-1')).toBe(0);
  });

  it('sets aside a header that is not one, a wrong row count and an over-long length in the middle, keeping what follows', async () => {
    const j = await openJournal();
    await j.append([row(1), row(2)]);
    await j.close();
    const whole = fs.readFileSync(j.file);
    const csv = samplesCsv([row(3)]);
    for (const bad of [Buffer.from('#bat garbage\n'), Buffer.from(`#batch ${Buffer.byteLength(csv)} 2\n${csv}`), Buffer.from(`#batch 99999 1\n${csv}`)]) {
      fs.writeFileSync(j.file, Buffer.concat([whole, bad, whole]));
      const scan = scanJournal(fs.readFileSync(j.file));
      expect(scan.rows.map((r) => r.seq)).toEqual([1, 2, 1, 2]);
      expect(scan.damaged.map((d) => d.bytes.toString())).toEqual([bad.toString()]);
    }
  });

  it('reads the checksum-less #batch form of the journal before this one, and 9-column rows as a local port', async () => {
    const j = await openJournal();
    await j.close();
    const csv = '7,"b1","pressure",,"DP +1",1,"inH2O",1700000000000,12\n';
    fs.writeFileSync(j.file, `#batch ${Buffer.byteLength(csv)} 1\n${csv}`);
    expect(await j.read()).toEqual([
      { seq: 7, benchId: 'b1', device: 'pressure', runId: null, raw: 'DP +1', value: 1, unit: 'inH2O', wallMs: 1.7e12, monoMs: 12, sourceKind: 'port', sourceId: 'b1', clientWallMs: null },
    ]);
  });

  it('still reads a journal of the older form (one JSON array per line), torn last line ignored', async () => {
    const j = await openJournal();
    await j.close();
    const packed = (r: JournalRow) => [r.seq, r.benchId, r.device, r.runId, r.raw, r.value, r.unit, r.wallMs, r.monoMs];
    fs.writeFileSync(j.file, `${JSON.stringify([packed(row(1)), packed(row(2))])}\n${JSON.stringify([packed(row(3))]).slice(0, 10)}`);
    expect(await j.read()).toEqual([row(1), row(2)]);
  });
});
