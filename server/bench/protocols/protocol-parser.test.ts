import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { classifyScpiMeterLine, createCalibratorClassifier, SIMCAL_PROFILE, type DroppedLine, type ProtocolFrame } from '../../../shared/protocol';
import { ProtocolParser } from './protocol-parser';

function run(parser: ProtocolParser, chunks: (string | number[])[]): { frames: ProtocolFrame[]; dropped: DroppedLine[] } {
  const frames: ProtocolFrame[] = [];
  const dropped: DroppedLine[] = [];
  parser.on('data', (f) => frames.push(f));
  parser.on('dropped', (d) => dropped.push(d));
  for (const chunk of chunks) parser.write(typeof chunk === 'string' ? Buffer.from(chunk, 'latin1') : Buffer.from(chunk));
  return { frames, dropped };
}

const samples = (frames: ProtocolFrame[]): number[] => frames.flatMap((f) => (f.type === 'sample' ? [f.sample.value] : []));

describe('ProtocolParser (Transform)', () => {
  it('SCPI: a line split across chunks and two lines in one chunk', () => {
    const parser = new ProtocolParser(classifyScpiMeterLine);
    const { frames } = run(parser, ['+1.2000', '00E-02\n+4.000000E-03\n+2.0E-02\n']);
    expect(samples(frames)).toEqual([12, 4, 20]);
    expect(parser.stats.samples).toBe(3);
  });

  it('SCPI: garbage first, an overlong line and a non-numeric reply are dropped and counted, not thrown', () => {
    const parser = new ProtocolParser(classifyScpiMeterLine, { maxLineLength: 32 });
    const { frames, dropped } = run(parser, [
      [0x00, 0xff, 0x13, 0x0a],
      '+1.000000E-02\n',
      '9'.repeat(100),
      '\n+1.100000E-02\nOVLD\n+1.200000E-02\n',
    ]);
    expect(samples(frames)).toEqual([10, 11, 12]);
    expect(dropped.map((d) => d.reason)).toEqual(['binary', 'overlong']);
    expect(parser.stats.framer.dropped).toMatchObject({ binary: 1, overlong: 1 });
    expect(parser.stats.rejected['not-a-number']).toBe(1);
    expect(frames.filter((f) => f.type === 'rejected')).toEqual([{ type: 'rejected', raw: 'OVLD', reason: 'not-a-number', detail: 'OVLD' }]);
  });

  it('calibrator: a wrong unit is a counted, rejected frame', () => {
    const parser = new ProtocolParser(createCalibratorClassifier(SIMCAL_PROFILE), { terminator: '\r\n' });
    const { frames } = run(parser, ['DP +1.00000 inH2O@68F\r\nDP +1.0', '0000 kPa\r\nDP +2.00000 inH2O@68F\r\n']);
    expect(samples(frames)).toEqual([1, 2]);
    expect(parser.stats.rejected['wrong-unit']).toBe(1);
  });

  it('reset() forgets a partial line after a reconnect', () => {
    const parser = new ProtocolParser(classifyScpiMeterLine);
    const { frames } = run(parser, ['+1.0000']);
    parser.reset();
    parser.write(Buffer.from('+2.000000E-02\n'));
    expect(samples(frames)).toEqual([20]);
  });

  it('fuzz: random byte chunks between valid lines never error the stream and keep every valid line in order', () => {
    const reading = fc.integer({ min: 3_600_000, max: 21_000_000 }).map((n) => n / 1e9);
    const item = fc.oneof(
      reading.map((amps) => ({ kind: 'valid' as const, amps })),
      fc.uint8Array({ maxLength: 300 }).map((data) => ({ kind: 'noise' as const, data })),
    );
    fc.assert(
      fc.property(fc.array(item, { maxLength: 30 }), fc.integer({ min: 1, max: 50 }), (items, chunkSize) => {
        const parser = new ProtocolParser(classifyScpiMeterLine, { maxLineLength: 64 });
        let errored = false;
        parser.on('error', () => (errored = true));
        const parts: Buffer[] = [];
        const expected: string[] = [];
        for (const it of items) {
          if (it.kind === 'valid') {
            const line = `${it.amps >= 0 ? '+' : '-'}${Math.abs(it.amps).toExponential(6).toUpperCase()}`;
            expected.push(line);
            parts.push(Buffer.from(line + '\n'));
          } else {
            // Noise ends at a line end; the parser resynchronises there.
            parts.push(Buffer.from(it.data), Buffer.from('\n'));
          }
        }
        const all = Buffer.concat(parts);
        const { frames } = run(parser, []);
        for (let at = 0; at < all.length; at += chunkSize) parser.write(all.subarray(at, at + chunkSize));
        const raws = frames.flatMap((f) => (f.type === 'sample' ? [f.sample.raw] : []));
        let j = 0;
        for (const raw of raws) if (j < expected.length && raw === expected[j]) j += 1;
        expect(j).toBe(expected.length);
        expect(errored).toBe(false);
      }),
      { numRuns: 200 },
    );
  });
});
