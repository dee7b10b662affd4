/**
 * Frame layout tests on literal bytes. The layouts follow HCF_SPEC-081 (data link layer) as
 * remembered, not as read: the specification text was not available here. Every checksum below
 * was recomputed by hand (XOR from the delimiter to the last data byte) outside this code.
 */
import { describe, expect, it } from 'vitest';
import { decodeAddress, encodeHartFrame, hartChecksum, hartDelimiter, hartRequest, hartResponse, parseDelimiter, sameDevice, toHex, type HartLongAddress, type HartShortAddress } from './frame';
import { hex } from './test-bytes';

const POLL0: HartShortAddress = { type: 'short', master: 'primary', burst: false, pollingAddress: 0 };
const LONG: HartLongAddress = { type: 'long', master: 'primary', burst: false, uniqueId: hex('26 0F 12 34 56') };

describe('HART frames (HCF_SPEC-081, from memory)', () => {
  it('encodes the short-frame command 0 request to polling address 0 from the primary master', () => {
    expect(toHex(encodeHartFrame(hartRequest(POLL0, 0)))).toBe('FF FF FF FF FF 02 80 00 00 82');
  });

  it('encodes a long-frame request: delimiter 0x82, master bit over the unique id', () => {
    expect(encodeHartFrame(hartRequest(LONG, 1))).toEqual(hex('FF FF FF FF FF 82 A6 0F 12 34 56 01 00 5A'));
  });

  it('encodes a long-frame response with the two status bytes counted in the byte count', () => {
    // Command 1 reply: response code 0, status 0x40 (configuration changed), unit 1, 25.0 (41 C8 00 00).
    const frame = hartResponse(LONG, 1, { responseCode: 0, deviceStatus: 0x40 }, hex('01 41 C8 00 00'));
    expect(encodeHartFrame(frame)).toEqual(hex('FF FF FF FF FF 86 A6 0F 12 34 56 01 07 00 40 01 41 C8 00 00 91'));
  });

  it('encodes a response with no data as a byte count of 2', () => {
    expect(encodeHartFrame(hartResponse(LONG, 3, { responseCode: 32, deviceStatus: 0 }))).toEqual(hex('FF FF FF FF FF 86 A6 0F 12 34 56 03 02 20 00 7E'));
  });

  it('clamps the preamble count to 5–20', () => {
    expect(encodeHartFrame(hartRequest(POLL0, 0), { preambles: 2 }).slice(0, 6)).toEqual(hex('FF FF FF FF FF 02'));
    expect(encodeHartFrame(hartRequest(POLL0, 0), { preambles: 30 }).length).toBe(20 + 5);
  });

  it('computes the checksum as the XOR of the bytes given', () => {
    expect(hartChecksum(hex('02 80 00 00'))).toBe(0x82);
    expect(hartChecksum(hex('FF FF 02 80 00 00'), 2)).toBe(0x82);
  });

  it('reads delimiters: kind, address length and expansion bytes; refuses non-FSK physical layer bits', () => {
    expect(parseDelimiter(0x02)).toEqual({ kind: 'request', long: false, expansionBytes: 0 });
    expect(parseDelimiter(0x86)).toEqual({ kind: 'response', long: true, expansionBytes: 0 });
    expect(parseDelimiter(0x81)).toEqual({ kind: 'burst', long: true, expansionBytes: 0 });
    expect(parseDelimiter(0xc2)).toEqual({ kind: 'request', long: true, expansionBytes: 2 });
    expect(parseDelimiter(0x0a)).toBeUndefined();
    expect(parseDelimiter(0x03)).toBeUndefined();
    expect(parseDelimiter(0xff)).toBeUndefined();
    expect(hartDelimiter('response', true, 1)).toBe(0xa6);
  });

  it('reads addresses: master and burst bits, polling address, unique id without the top bits', () => {
    expect(decodeAddress(hex('80'))).toEqual(POLL0);
    expect(decodeAddress(hex('4F'))).toEqual({ type: 'short', master: 'secondary', burst: true, pollingAddress: 15 });
    const long = decodeAddress(hex('A6 0F 12 34 56'));
    expect(long).toEqual(LONG);
    expect(sameDevice(long, { ...LONG, master: 'secondary' })).toBe(true);
    expect(sameDevice(long, { ...LONG, uniqueId: hex('26 0F 12 34 57') })).toBe(false);
    expect(sameDevice(POLL0, LONG)).toBe(false);
  });

  it('refuses programmer errors with RangeError', () => {
    expect(() => encodeHartFrame(hartRequest({ ...POLL0, pollingAddress: 64 }, 0))).toThrow(RangeError);
    expect(() => encodeHartFrame(hartRequest(POLL0, 256))).toThrow(RangeError);
    expect(() => encodeHartFrame(hartRequest({ ...LONG, uniqueId: hex('01 02') }, 0))).toThrow(RangeError);
    expect(() => encodeHartFrame({ kind: 'response', address: POLL0, command: 0, data: new Uint8Array(0) })).toThrow(/status/);
    expect(() => encodeHartFrame(hartRequest(POLL0, 0, new Uint8Array(256)))).toThrow(RangeError);
  });
});
