import { describe, expect, it } from 'vitest';
import type { HartConfigView } from '../../shared/schemas/hart-job';
import { compareHartWithRegister, correctedRegister, transferCodeOf } from './hart-compare';

const config: HartConfigView = { unit: 'inH2O@68F', unitCode: 1, lrv: 0, urv: 100, transferFunctionCode: 1, transferFunction: 'square root', dampingS: 0.4, writeProtect: false, alarmSelection: 0 };
const register = { tag: 'FT-101', lrv: 0, urv: 100, unit: 'inH2O@68F', outputMode: 'sqrt-transmitter' as const, cutoffMode: 'clamp' };

describe('compareHartWithRegister', () => {
  it('finds nothing when the device agrees (tag compared upper-cased, range within float resolution)', () => {
    expect(compareHartWithRegister({ tag: 'ft-101 ' }, { ...config, urv: 100.00001 }, register)).toEqual([]);
  });

  it('maps the register output mode to the transfer function code: a root in the host has a linear transmitter', () => {
    expect([transferCodeOf('linear'), transferCodeOf('sqrt-host'), transferCodeOf('sqrt-transmitter')]).toEqual([0, 0, 1]);
    expect(compareHartWithRegister({ tag: 'FT-101' }, { ...config, transferFunctionCode: 0, transferFunction: 'linear' }, { ...register, outputMode: 'sqrt-host' })).toEqual([]);
  });

  it('names a different tag, range, unit and transfer function', () => {
    const m = compareHartWithRegister({ tag: 'FT-102' }, { ...config, unit: 'kPa', unitCode: 12, urv: 25, transferFunctionCode: 0, transferFunction: 'linear' }, register);
    expect(m.map((x) => x.field)).toEqual(['tag', 'unit', 'range', 'transfer-function']);
    expect(m[3]!.message).toBe('Transfer function: the device is set to linear, the register says square root in the transmitter');
  });

  it('compares the range in the register unit when the units differ but convert', () => {
    // 100 inH2O at 68 °F is 24.8646 kPa (1 inH2O at 68 °F = 248.64 Pa, from memory; the unit table converts).
    const m = compareHartWithRegister({ tag: 'FT-101' }, { ...config, unit: 'kPa', unitCode: 12, urv: 24.8646 }, register);
    expect(m.map((x) => x.field)).toEqual(['unit']);
  });

  it('an unknown unit code is a unit and range disagreement', () => {
    const m = compareHartWithRegister({ tag: 'FT-101' }, { ...config, unit: null, unitCode: 200 }, register);
    expect(m.map((x) => x.field)).toEqual(['unit', 'range']);
    expect(m[0]!.device).toBe('unit code 200');
  });
});

describe('correctedRegister', () => {
  it('takes range, unit and output mode from the device; a linear output loses its cutoff', () => {
    const dev = { ...config, unit: 'kPa', unitCode: 12, lrv: 0, urv: 30, transferFunctionCode: 0, transferFunction: 'linear' };
    const m = compareHartWithRegister({ tag: 'FT-101' }, dev, register);
    expect(correctedRegister(dev, register, m)).toEqual({ lrv: 0, urv: 30, unit: 'kPa', outputMode: 'linear', cutoffMode: 'none' });
  });

  it('keeps a root in the host when the device is linear and the register had one', () => {
    const reg = { ...register, outputMode: 'sqrt-host' as const };
    const dev = { ...config, transferFunctionCode: 1, transferFunction: 'square root' };
    expect(correctedRegister(dev, reg, compareHartWithRegister({ tag: 'FT-101' }, dev, reg))).toEqual({ outputMode: 'sqrt-transmitter' });
  });
});
