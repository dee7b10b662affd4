import { describe, expect, it } from 'vitest';
import { classifyScpiMeterLine, createCalibratorClassifier, ProtocolDecoder } from './protocol-decoder';
import { SIMCAL_PROFILE } from './line-profile';

const ascii = (text: string): Uint8Array => Uint8Array.from(text, (c) => c.charCodeAt(0));

describe('ProtocolDecoder', () => {
  it('SCPI: readings become samples, IDN and error entries text, the rest rejected and counted', () => {
    const decoder = new ProtocolDecoder(classifyScpiMeterLine);
    const frames = [
      ...decoder.push(ascii('+1.2000')),
      ...decoder.push(ascii('00E-02\nACME,DMM,1,2\n+0,"No error"\n')),
      ...decoder.push(ascii('OVLD\n+9.9E37\n')),
    ];
    expect(frames).toEqual([
      { type: 'sample', sample: { device: 'current', raw: '+1.200000E-02', value: 12, unit: 'mA' } },
      { type: 'text', raw: 'ACME,DMM,1,2' },
      { type: 'text', raw: '+0,"No error"' },
      { type: 'rejected', raw: 'OVLD', reason: 'not-a-number', detail: 'OVLD' },
      { type: 'rejected', raw: '+9.9E37', reason: 'overflow', detail: '+9.9E37' },
    ]);
    expect(decoder.stats.samples).toBe(1);
    expect(decoder.stats.texts).toBe(2);
    expect(decoder.stats.rejected).toMatchObject({ 'not-a-number': 1, overflow: 1 });
  });

  it('calibrator: a wrong unit is a counted bad line, never thrown', () => {
    const decoder = new ProtocolDecoder(createCalibratorClassifier(SIMCAL_PROFILE), { terminator: '\r\n' });
    const frames = decoder.push(ascii('DP 1.5 inH2O@68F\r\nDP 1.5 kPa\r\n\xff\xfe\r\nDP 2.5 inH2O@68F\r\n'));
    expect(frames.map((f) => f.type)).toEqual(['sample', 'rejected', 'sample']);
    expect(decoder.stats.rejected['wrong-unit']).toBe(1);
    expect(decoder.stats.framer.dropped.binary).toBe(1);
  });

  it('a throwing classifier counts as no-match', () => {
    const decoder = new ProtocolDecoder(() => {
      throw new Error('bad classifier');
    });
    expect(decoder.push('x\n')).toEqual([{ type: 'rejected', raw: 'x', reason: 'no-match' }]);
  });
});
