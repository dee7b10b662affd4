/**
 * The streaming decoder on literal chunks (frames per HCF_SPEC-081 as remembered, not read), and a
 * fast-check fuzz: garbage never throws, and a valid frame inside noise is always found.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { encodeHartFrame, parseDelimiter, toHex, type HartFrame } from './frame';
import { HartFrameDecoder, type HartDecoderEvent } from './frame-decoder';
import { hex } from './test-bytes';

const CMD0_REQ = 'FF FF FF FF FF 02 80 00 00 82';
const CMD1_RESP = 'FF FF FF FF FF 86 A6 0F 12 34 56 01 07 00 40 01 41 C8 00 00 91';
const CMD3_BUSY = 'FF FF FF FF FF 86 A6 0F 12 34 56 03 02 20 00 7E';

const frames = (events: HartDecoderEvent[]) => events.flatMap((e) => (e.type === 'frame' ? [e] : []));
const rawFrames = (events: HartDecoderEvent[]) => frames(events).map((e) => toHex(e.raw));

describe('HartFrameDecoder', () => {
  it('decodes a request and a response with status', () => {
    const d = new HartFrameDecoder();
    const [req] = frames(d.push(hex(CMD0_REQ)));
    expect(req?.frame).toEqual({ kind: 'request', address: { type: 'short', master: 'primary', burst: false, pollingAddress: 0 }, command: 0, data: new Uint8Array(0) });
    expect(req?.preambles).toBe(5);
    const [resp] = frames(d.push(hex(CMD1_RESP)));
    expect(resp?.frame.status).toEqual({ responseCode: 0, deviceStatus: 0x40 });
    expect(resp?.frame.data).toEqual(hex('01 41 C8 00 00'));
    expect(d.stats).toEqual({ frames: 2, badChecksums: 0, garbageBytes: 0 });
  });

  it('joins a frame split across chunks, byte by byte', () => {
    const d = new HartFrameDecoder();
    const bytes = hex(CMD1_RESP);
    const events = Array.from(bytes).flatMap((b) => d.push(Uint8Array.of(b)));
    expect(rawFrames(events)).toEqual([CMD1_RESP]);
  });

  it('emits two frames from one chunk, in order', () => {
    const d = new HartFrameDecoder();
    expect(rawFrames(d.push(hex(`${CMD0_REQ} ${CMD3_BUSY}`)))).toEqual([CMD0_REQ, CMD3_BUSY]);
  });

  it('drops and counts garbage before a frame, then resynchronises on the preambles', () => {
    const d = new HartFrameDecoder();
    const events = d.push(hex(`13 02 86 00 41 FF 7E ${CMD3_BUSY}`));
    expect(rawFrames(events)).toEqual([CMD3_BUSY]);
    expect(events[0]).toEqual({ type: 'garbage', bytes: hex('13 02 86 00 41 FF 7E') });
    expect(d.stats.garbageBytes).toBe(7);
  });

  it('reports a frame whose checksum fails with its header, and reads the next one', () => {
    const d = new HartFrameDecoder();
    const damaged = CMD3_BUSY.replace(/7E$/, '7F');
    const events = d.push(hex(`${damaged} ${CMD1_RESP}`));
    const bad = events.find((e) => e.type === 'bad-checksum');
    expect(bad).toMatchObject({ type: 'bad-checksum', kind: 'response', command: 3 });
    expect(rawFrames(events)).toEqual([CMD1_RESP]);
    expect(d.stats.badChecksums).toBe(1);
  });

  it('does not let a false start in noise swallow the real frame behind it', () => {
    // "FF FF 02 80 00 40" claims 64 data bytes and would run past the real reply; the reply is found.
    const d = new HartFrameDecoder();
    expect(rawFrames(d.push(hex(`FF FF 02 80 00 40 ${CMD1_RESP}`)))).toEqual([CMD1_RESP]);
    // The same when the false start completes with a bad checksum later.
    const e = new HartFrameDecoder();
    const events = e.push(hex(`FF FF 02 80 00 03 ${CMD3_BUSY} 55`));
    expect(rawFrames(events)).toEqual([CMD3_BUSY]);
  });

  it('reads a frame with expansion bytes and a burst frame', () => {
    const frame: HartFrame = { kind: 'burst', address: { type: 'short', master: 'secondary', burst: true, pollingAddress: 1 }, command: 1, status: { responseCode: 0, deviceStatus: 0 }, data: hex('01 41 C8 00 00'), expansion: hex('AA') };
    const d = new HartFrameDecoder();
    const [got] = frames(d.push(encodeHartFrame(frame)));
    expect(got?.frame).toEqual(frame);
  });

  it('forgets unfinished bytes on reset', () => {
    const d = new HartFrameDecoder();
    d.push(hex(CMD1_RESP).slice(0, 12));
    d.reset();
    expect(rawFrames(d.push(hex(CMD1_RESP).slice(12)))).toEqual([]);
    expect(rawFrames(d.push(hex(CMD1_RESP)))).toEqual([CMD1_RESP]);
  });
});

const shortAddress = fc.record({ type: fc.constant('short' as const), master: fc.constantFrom('primary' as const, 'secondary' as const), burst: fc.boolean(), pollingAddress: fc.integer({ min: 0, max: 63 }) });
const longAddress = fc.record({
  type: fc.constant('long' as const),
  master: fc.constantFrom('primary' as const, 'secondary' as const),
  burst: fc.boolean(),
  uniqueId: fc.uint8Array({ minLength: 5, maxLength: 5 }).map((u) => Uint8Array.from(u, (b, i) => (i === 0 ? b & 0x3f : b))),
});
const validFrame = fc
  .record({
    kind: fc.constantFrom('request' as const, 'response' as const, 'burst' as const),
    address: fc.oneof(shortAddress, longAddress),
    command: fc.integer({ min: 0, max: 255 }),
    status: fc.record({ responseCode: fc.integer({ min: 0, max: 255 }), deviceStatus: fc.integer({ min: 0, max: 255 }) }),
    data: fc.uint8Array({ maxLength: 40 }),
    preambles: fc.integer({ min: 5, max: 20 }),
  })
  .map(({ kind, status, preambles, ...rest }) => ({ frame: (kind === 'request' ? { kind, ...rest } : { kind, status, ...rest }) as HartFrame, preambles }));

/**
 * Noise before a frame with no preamble pair followed by a delimiter: such a pair in noise is a
 * frame start, which 1 time in 256 completes with a matching checksum and overlaps the real frame
 * (a master's retry is the cure for that on a real line). Everything else is allowed: lone 0xFF,
 * delimiter bytes, byte counts, whole damaged frames.
 */
const hasFalseStart = (u: Uint8Array): boolean => u.some((b, i) => i >= 2 && u[i - 1] === 0xff && u[i - 2] === 0xff && parseDelimiter(b) !== undefined);
const noise = fc.uint8Array({ maxLength: 300 });

/** Splits bytes into chunks at the given cut points. */
function chunked(bytes: Uint8Array, cuts: number[]): Uint8Array[] {
  const points = [...new Set(cuts.map((c) => c % (bytes.length + 1)))].sort((a, b) => a - b);
  const out: Uint8Array[] = [];
  let from = 0;
  for (const p of [...points, bytes.length]) {
    out.push(bytes.slice(from, p));
    from = p;
  }
  return out;
}

describe('HartFrameDecoder fuzz (fast-check)', () => {
  it('never throws on garbage in any chunking, and accounts for every byte it drops', () => {
    fc.assert(
      fc.property(fc.array(fc.uint8Array({ maxLength: 400 }), { maxLength: 8 }), (chunks) => {
        const d = new HartFrameDecoder();
        for (const chunk of chunks) expect(() => d.push(chunk)).not.toThrow();
        expect(d.stats.garbageBytes).toBeLessThanOrEqual(chunks.reduce((n, c) => n + c.length, 0));
      }),
      { numRuns: 300 },
    );
  });

  it('finds every valid frame embedded in random noise, whatever the chunking', () => {
    fc.assert(
      fc.property(noise.filter((n) => !hasFalseStart(n)), validFrame, noise, fc.array(fc.nat(), { maxLength: 6 }), (before, { frame, preambles }, after, cuts) => {
        const wire = encodeHartFrame(frame, { preambles });
        const stream = new Uint8Array(before.length + wire.length + after.length);
        stream.set(before);
        stream.set(wire, before.length);
        stream.set(after, before.length + wire.length);
        const d = new HartFrameDecoder();
        const found = chunked(stream, cuts).flatMap((c) => frames(d.push(c)));
        const expected = toHex(encodeHartFrame(frame, { preambles: 5 }));
        expect(found.map((f) => toHex(encodeHartFrame(f.frame, { preambles: 5 })))).toContain(expected);
      }),
      { numRuns: 400 },
    );
  });

  it('finds several frames between noise bursts', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(noise.filter((n) => !hasFalseStart(n)), validFrame), { minLength: 1, maxLength: 5 }), (parts) => {
        const d = new HartFrameDecoder();
        const found: string[] = [];
        for (const [n, { frame, preambles }] of parts) {
          for (const e of frames([...d.push(n), ...d.push(encodeHartFrame(frame, { preambles }))])) found.push(toHex(encodeHartFrame(e.frame)));
        }
        for (const [, { frame }] of parts) expect(found).toContain(toHex(encodeHartFrame(frame)));
      }),
      { numRuns: 200 },
    );
  });
});
