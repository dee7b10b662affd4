import { describe, expect, it } from 'vitest';
import { createLineDecoder, SIMCAL_PROFILE, validateLineProfile, type LineProtocolProfile } from './line-profile';

describe('line protocol profile', () => {
  const decode = createLineDecoder(SIMCAL_PROFILE);

  it('decodes the simulated calibrator reply', () => {
    expect(decode('DP +12.34567 inH2O@68F')).toEqual({ ok: true, value: 12.34567, unit: 'inH2O@68F' });
    expect(decode('DP -0.5 inH2O@68F')).toEqual({ ok: true, value: -0.5, unit: 'inH2O@68F' });
  });

  it('rejects a wrong unit, a non-numeric value and a line of another shape', () => {
    expect(decode('DP 3.1 kPa')).toMatchObject({ ok: false, reason: 'wrong-unit' });
    expect(decode('DP ---- inH2O@68F')).toMatchObject({ ok: false, reason: 'not-a-number' });
    expect(decode('HELLO')).toMatchObject({ ok: false, reason: 'no-match' });
  });

  it('applies scale and unit aliases, and works without a unit group', () => {
    const profile: LineProtocolProfile = {
      id: 'pa-as-kpa',
      mode: 'stream',
      queryCommand: '',
      responsePattern: '^P=(?<value>[^ ]+) (?<unit>\\w+)$',
      unit: 'kPa',
      scale: 0.001,
      lineEnding: '\r',
      unitAliases: { PA: 'kPa' },
    };
    expect(createLineDecoder(profile)('P=2500 PA')).toEqual({ ok: true, value: 2.5, unit: 'kPa' });
    const bare = createLineDecoder({ ...profile, responsePattern: '^(?<value>\\S+)$', scale: 1 });
    expect(bare('101.3')).toEqual({ ok: true, value: 101.3, unit: 'kPa' });
  });

  it('reports invalid profiles', () => {
    const broken = { ...SIMCAL_PROFILE, responsePattern: '^(\\d+$', scale: 0, queryCommand: ' ' };
    expect(validateLineProfile(broken)).toHaveLength(3);
    expect(validateLineProfile({ ...SIMCAL_PROFILE, responsePattern: '^(\\d+)$' })).toEqual([
      'responsePattern needs a named group "value"',
    ]);
    expect(() => createLineDecoder(broken)).toThrow(TypeError);
    expect(validateLineProfile(SIMCAL_PROFILE)).toEqual([]);
  });
});
