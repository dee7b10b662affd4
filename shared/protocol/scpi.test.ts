import { describe, expect, it } from 'vitest';
import { decodeScpiCurrent, formatScpiNumber, parseIdentity } from './scpi';

describe('SCPI current meter', () => {
  it('parses an *IDN? reply into its four fields (IEEE 488.2 §10.14)', () => {
    expect(parseIdentity('STILLPOINT,SIM-DMM 1,0042,1.3.0')).toEqual({
      manufacturer: 'STILLPOINT',
      model: 'SIM-DMM 1',
      serial: '0042',
      firmware: '1.3.0',
    });
    expect(parseIdentity('only,three,fields')).toBeUndefined();
    expect(parseIdentity('a,,c,d')).toBeUndefined();
  });

  it('decodes a READ? reply in amperes to milliamperes', () => {
    expect(decodeScpiCurrent('+1.234567E-02')).toEqual({ ok: true, value: 12.34567, unit: 'mA' });
    expect(decodeScpiCurrent(' 4.000000E-03 ')).toEqual({ ok: true, value: 4, unit: 'mA' });
    expect(decodeScpiCurrent('-1E-6')).toEqual({ ok: true, value: -0.001, unit: 'mA' });
    expect(decodeScpiCurrent('0.02')).toEqual({ ok: true, value: 20, unit: 'mA' });
  });

  it('rejects non-numeric replies', () => {
    for (const line of ['OVLD', '1,5E-3', '0x10', 'Infinity', 'NaN', '+', '1.2.3', '']) {
      expect(decodeScpiCurrent(line)).toMatchObject({ ok: false, reason: 'not-a-number' });
    }
  });

  it('rejects the SCPI overflow and not-a-number codes', () => {
    expect(decodeScpiCurrent('+9.90000000E+37')).toMatchObject({ ok: false, reason: 'overflow' });
    expect(decodeScpiCurrent('-9.9E37')).toMatchObject({ ok: false, reason: 'overflow' });
    expect(decodeScpiCurrent('9.91E37')).toMatchObject({ ok: false, reason: 'overflow' });
    expect(decodeScpiCurrent('1E400')).toMatchObject({ ok: false });
  });

  it('formats NR3 replies that decode back to the same value', () => {
    expect(formatScpiNumber(0.01234567)).toBe('+1.234567E-02');
    expect(formatScpiNumber(-0.0036)).toBe('-3.600000E-03');
    expect(formatScpiNumber(0)).toBe('+0.000000E+00');
    expect(decodeScpiCurrent(formatScpiNumber(0.0205))).toEqual({ ok: true, value: 20.5, unit: 'mA' });
  });
});
