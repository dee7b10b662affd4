/**
 * The sample journal on disk: what is appended (and synced) reads back exactly, whatever the raw
 * line holds; a batch cut short by a crash is ignored; the older one-JSON-line form still reads.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { afterEach, describe, expect, it } from 'vitest';
import { SampleJournal, type JournalRow } from './journal';
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

  it('ignores a batch cut short by a crash, and everything after a damaged header', async () => {
    const j = await openJournal();
    await j.append([row(1), row(2)]);
    await j.close();
    const whole = fs.readFileSync(j.file);
    // A second batch whose bytes were only partly written.
    const second = Buffer.concat([Buffer.from(`#batch 500 3\n`), Buffer.from(samplesCsv([row(3)]))]);
    fs.writeFileSync(j.file, Buffer.concat([whole, second]));
    expect((await j.read()).map((r) => r.seq)).toEqual([1, 2]);
    // A header that is not one.
    fs.writeFileSync(j.file, Buffer.concat([whole, Buffer.from('#bat'), whole]));
    expect((await j.read()).map((r) => r.seq)).toEqual([1, 2]);
    // A batch whose row count does not match its header.
    const csv = samplesCsv([row(3)]);
    fs.writeFileSync(j.file, Buffer.concat([whole, Buffer.from(`#batch ${Buffer.byteLength(csv)} 2\n${csv}`)]));
    expect((await j.read()).map((r) => r.seq)).toEqual([1, 2]);
  });

  it('still reads a journal of the older form (one JSON array per line), torn last line ignored', async () => {
    const j = await openJournal();
    await j.close();
    const packed = (r: JournalRow) => [r.seq, r.benchId, r.device, r.runId, r.raw, r.value, r.unit, r.wallMs, r.monoMs];
    fs.writeFileSync(j.file, `${JSON.stringify([packed(row(1)), packed(row(2))])}\n${JSON.stringify([packed(row(3))]).slice(0, 10)}`);
    expect(await j.read()).toEqual([row(1), row(2)]);
  });
});
