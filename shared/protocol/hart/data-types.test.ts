/**
 * Data types on literal bytes. Packed ASCII and the date layout follow HCF_SPEC-127 as remembered
 * (not read here); the float bytes are plain IEEE 754 single precision, big-endian.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { decodeDate, decodeFloat, encodeDate, encodeFloat, HART_NAN, isPackableAscii, packAscii, readUint, unpackAscii, writeUint } from './data-types';
import { hex } from './test-bytes';

describe('packed ASCII (HCF_SPEC-127, from memory)', () => {
  it('packs four 6-bit characters into three bytes', () => {
    // A=0x01 B=0x02 C=0x03 D=0x04 → 000001 000010 000011 000100 = 0x0420C4.
    expect(packAscii('ABCD', 3)).toEqual(hex('04 20 C4'));
    // F=0x06 T=0x14 -=0x2D 1=0x31 → 0x194B71; 0=0x30 1=0x31, then two spaces (0x20).
    expect(packAscii('FT-101', 6)).toEqual(hex('19 4B 71 C3 18 20'));
  });

  it('unpacks, setting bit 6 where bit 5 is clear', () => {
    expect(unpackAscii(hex('19 4B 71 C3 18 20'))).toBe('FT-101  ');
    expect(unpackAscii(hex('04 20 C4'))).toBe('ABCD');
  });

  it('writes lower case as upper case and refuses what it cannot hold', () => {
    expect(unpackAscii(packAscii('pt-7', 3))).toBe('PT-7');
    expect(() => packAscii('ÄBC', 3)).toThrow(RangeError);
    expect(() => packAscii('TOO LONG!', 6)).toThrow(/longer than 8/);
    expect(() => packAscii('A', 4)).toThrow(/multiple of 3/);
    expect(isPackableAscii('FT-101', 8)).toBe(true);
    expect(isPackableAscii('ft~1', 8)).toBe(false);
    expect(isPackableAscii('123456789', 8)).toBe(false);
  });

  it('round-trips every packable string', () => {
    const char = fc.integer({ min: 0x20, max: 0x5f }).map((c) => String.fromCharCode(c));
    fc.assert(
      fc.property(fc.array(char, { maxLength: 16 }), (chars) => {
        const text = chars.join('');
        expect(unpackAscii(packAscii(text, 12))).toBe(text.padEnd(16, ' '));
      }),
    );
  });
});

describe('floats, dates and integers', () => {
  it('writes IEEE 754 single floats big-endian', () => {
    expect(encodeFloat(4)).toEqual(hex('40 80 00 00'));
    expect(encodeFloat(20)).toEqual(hex('41 A0 00 00'));
    expect(encodeFloat(-1.5)).toEqual(hex('BF C0 00 00'));
    expect(decodeFloat(hex('00 42 C8 00 00'), 1)).toBe(100);
    expect(decodeFloat(hex('42 C8 00'))).toBeUndefined();
    expect(decodeFloat(HART_NAN)).toBeNaN();
  });

  it('writes a date as day, month, year − 1900 (from memory)', () => {
    expect(encodeDate({ year: 2026, month: 12, day: 2 })).toEqual(hex('02 0C 7E'));
    expect(decodeDate(hex('02 0C 7E'))).toEqual({ year: 2026, month: 12, day: 2 });
    expect(() => encodeDate({ year: 2200, month: 1, day: 1 })).toThrow(RangeError);
  });

  it('reads and writes big-endian unsigned integers', () => {
    expect(writeUint(0x123456, 3)).toEqual(hex('12 34 56'));
    expect(readUint(hex('00 12 34 56'), 1, 3)).toBe(0x123456);
  });
});
