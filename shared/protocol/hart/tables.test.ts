/**
 * Common tables (HCF_SPEC-183) and status bytes (HCF_SPEC-081/-099/-127), from memory except the
 * water-column unit codes, which REFERENCE.md states.
 */
import { describe, expect, it } from 'vitest';
import { PRESSURE_UNIT_IDS } from '../../calc';
import { codeOfUnit, describeCode, describeDeviceStatus, describeResponseCode, HART_TRANSFER_FUNCTIONS, HART_UNIT_CODES, isCommunicationError, isSuccess, unitOfCode } from './tables';

describe('HART tables', () => {
  it('maps the water-column codes as REFERENCE.md states them (1, 4 at 68 °F; 145 at 60 °F; 238, 239 at 4 °C)', () => {
    expect(unitOfCode(1)).toBe('inH2O@68F');
    expect(unitOfCode(4)).toBe('mmH2O@68F');
    expect(unitOfCode(145)).toBe('inH2O@60F');
    expect(unitOfCode(238)).toBe('inH2O@4C');
    expect(unitOfCode(239)).toBe('mmH2O@4C');
  });

  it('maps kPa, bar, mbar, psi (from memory) and back; every pressure code lands on a known unit id', () => {
    expect([codeOfUnit('kPa'), codeOfUnit('bar'), codeOfUnit('mbar'), codeOfUnit('psi'), codeOfUnit('mA')]).toEqual([12, 7, 8, 6, 39]);
    expect(codeOfUnit('furlong')).toBeUndefined();
    expect(unitOfCode(200)).toBeUndefined();
    const known = new Set<string>([...PRESSURE_UNIT_IDS, 'mA', '%']);
    for (const id of Object.values(HART_UNIT_CODES)) expect(known.has(id)).toBe(true);
  });

  it('says the field device status bits in words, most significant first', () => {
    expect(describeDeviceStatus(0)).toEqual([]);
    expect(describeDeviceStatus(0x48)).toEqual(['configuration changed', 'loop current fixed']);
    expect(describeDeviceStatus(0xff)).toHaveLength(8);
    expect(describeDeviceStatus(0x85)).toEqual(['device malfunction', 'loop current saturated', 'primary variable out of limits']);
  });

  it('says response codes in words, command-specific where the meaning depends on the command', () => {
    expect(describeResponseCode(0)).toBe('success');
    expect(describeResponseCode(7, 43)).toBe('in write protect mode');
    expect(describeResponseCode(32, 3)).toBe('busy');
    expect(describeResponseCode(9, 45)).toBe('incorrect loop current mode or value');
    expect(describeResponseCode(9, 43)).toBe('applied process too high');
    expect(describeResponseCode(9)).toBe('response code 9');
    expect(describeResponseCode(0x88)).toBe('communication error: checksum error');
    expect(describeResponseCode(0x80)).toBe('communication error');
    expect(isCommunicationError(0x88)).toBe(true);
    expect([isSuccess(0), isSuccess(8), isSuccess(7)]).toEqual([true, true, false]);
  });

  it('names transfer function codes, and unknown codes by number', () => {
    expect(describeCode(HART_TRANSFER_FUNCTIONS, 1)).toBe('square root');
    expect(describeCode(HART_TRANSFER_FUNCTIONS, 77)).toBe('code 77');
  });
});
