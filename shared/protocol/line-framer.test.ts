import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { LineFramer, type DroppedLine } from './line-framer';

const bytes = (...parts: (string | number[])[]): Uint8Array =>
  Uint8Array.from(parts.flatMap((p) => (typeof p === 'string' ? Array.from(p, (c) => c.charCodeAt(0)) : p)));

describe('LineFramer', () => {
  it('joins a line split across chunks', () => {
    const framer = new LineFramer();
    expect(framer.push(bytes('+1.2345'))).toEqual([]);
    expect(framer.push(bytes('67E-02'))).toEqual([]);
    expect(framer.push(bytes('\n'))).toEqual(['+1.234567E-02']);
    expect(framer.stats.lines).toBe(1);
  });

  it('emits several lines from one chunk, in order', () => {
    const framer = new LineFramer({ terminator: '\r\n' });
    expect(framer.push(bytes('DP 1.0 kPa\r\nDP 2.0 kPa\r\nDP 3'))).toEqual(['DP 1.0 kPa', 'DP 2.0 kPa']);
    expect(framer.push(bytes('.0 kPa\r\n'))).toEqual(['DP 3.0 kPa']);
  });

  it('drops and counts garbage before a line, then resynchronises at the terminator', () => {
    const drops: DroppedLine[] = [];
    const framer = new LineFramer({}, (d) => drops.push(d));
    expect(framer.push(bytes([0xff, 0x00, 0x1b], 'x\n', '+4.000000E-03\n'))).toEqual(['+4.000000E-03']);
    expect(framer.stats.dropped.binary).toBe(1);
    expect(drops).toEqual([{ reason: 'binary', raw: '\\xff\\x00\\x1bx' }]);
  });

  it('drops a whole line that has noise inside it rather than emit a truncated value', () => {
    const framer = new LineFramer();
    expect(framer.push(bytes([0x00], '3E-02\n'))).toEqual([]);
    expect(framer.stats.dropped.binary).toBe(1);
  });

  it('with syncOnFirstTerminator drops the fragment before the first terminator', () => {
    const framer = new LineFramer({ syncOnFirstTerminator: true, terminator: '\r\n' });
    expect(framer.push(bytes('5.123 kPa\r\nDP 1.5 kPa\r\n'))).toEqual(['DP 1.5 kPa']);
    expect(framer.stats.dropped.partial).toBe(1);
    framer.push('DP 2');
    framer.reset();
    expect(framer.push('.5 kPa\r\nDP 3.5 kPa\r\n')).toEqual(['DP 3.5 kPa']);
    expect(framer.stats.dropped.partial).toBe(2);
  });

  it('drops an overlong line, counts it once and keeps the next line', () => {
    const framer = new LineFramer({ maxLineLength: 16 });
    expect(framer.push(bytes('A'.repeat(10)))).toEqual([]);
    expect(framer.push(bytes('B'.repeat(10)))).toEqual([]);
    expect(framer.push(bytes('C'.repeat(500), '\nok\n'))).toEqual(['ok']);
    expect(framer.stats.dropped.overlong).toBe(1);
    expect(framer.push(bytes('X'.repeat(16), '\r\n'))).toEqual(['X'.repeat(16)]);
    expect(framer.push(bytes('X'.repeat(17), '\r\n'))).toEqual([]);
    expect(framer.stats.dropped.overlong).toBe(2);
  });

  it('frames CR-terminated lines and ignores the LF of a CRLF', () => {
    const framer = new LineFramer({ terminator: '\r' });
    expect(framer.push('a\rb\r\nc')).toEqual(['a', 'b']);
    expect(framer.push('\rd\r')).toEqual(['c', 'd']);
    // A LF anywhere but right after the terminator is noise inside the line.
    expect(framer.push('e\nf\rg\r')).toEqual(['g']);
    expect(framer.stats.dropped.binary).toBe(1);
  });

  it('treats a CR inside a CRLF line as terminator noise only at the end', () => {
    const framer = new LineFramer({ terminator: '\r\n' });
    expect(framer.push('bare lf\nthen\r\n')).toEqual(['bare lf', 'then']);
    expect(framer.push('mid\rcr\r\n')).toEqual([]);
    expect(framer.stats.dropped.binary).toBe(1);
  });

  it('skips empty lines without counting them as drops', () => {
    const framer = new LineFramer();
    expect(framer.push('\n\r\n\nx\n')).toEqual(['x']);
    expect(framer.stats.dropped).toEqual({ overlong: 0, binary: 0, partial: 0 });
  });

  it('accepts strings and counts bytes', () => {
    const framer = new LineFramer();
    framer.push('abc\n');
    expect(framer.stats.bytes).toBe(4);
    expect(framer.push('é\n')).toEqual([]);
    expect(framer.stats.dropped.binary).toBe(1);
  });

  it('fuzz: random byte chunks between valid lines never throw and every valid line survives in order', () => {
    const validLine = fc.stringMatching(/^[+-]?\d{1,3}\.\d{1,6}E-0\d$/);
    const noise = fc.uint8Array({ maxLength: 400 });
    const item = fc.oneof(
      validLine.map((line) => ({ kind: 'valid' as const, line })),
      // Noise bursts end at a line end: the framer resynchronises there.
      noise.map((data) => ({ kind: 'noise' as const, data })),
    );
    fc.assert(
      fc.property(
        fc.array(item, { maxLength: 40 }),
        fc.constantFrom<'\n' | '\r\n' | '\r'>('\n', '\r\n', '\r'),
        fc.array(fc.integer({ min: 1, max: 64 }), { minLength: 1, maxLength: 8 }),
        (items, terminator, cuts) => {
          const term = Array.from(terminator, (c) => c.charCodeAt(0));
          const stream: number[] = [];
          const expected: string[] = [];
          for (const it of items) {
            if (it.kind === 'valid') {
              expected.push(it.line);
              stream.push(...Array.from(it.line, (c) => c.charCodeAt(0)), ...term);
            } else {
              stream.push(...it.data, ...term);
            }
          }
          const framer = new LineFramer({ terminator, maxLineLength: 64 });
          const out: string[] = [];
          let at = 0;
          let k = 0;
          while (at < stream.length) {
            const size = cuts[k % cuts.length]!;
            k += 1;
            out.push(...framer.push(Uint8Array.from(stream.slice(at, at + size))));
            at += size;
          }
          // Every valid line appears, in order (noise may add lines of its own in between).
          let j = 0;
          for (const line of out) if (j < expected.length && line === expected[j]) j += 1;
          expect(j).toBe(expected.length);
        },
      ),
      { numRuns: 300 },
    );
  });
});
