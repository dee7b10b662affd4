import { describe, expect, it } from 'vitest';
import { checkOutputMode } from './mode-check';

describe('output-mode check (25 % DP → 12 mA rooted, 8 mA linear: common practice; ±1.5 mA bands: product choice)', () => {
  it('decides', () => {
    expect(checkOutputMode(12.05).decision).toBe('root-in-transmitter');
    expect(checkOutputMode(13.5).decision).toBe('root-in-transmitter');
    expect(checkOutputMode(7.9).decision).toBe('linear-output');
    expect(checkOutputMode(10).decision).toBe('cannot-tell');
    expect(checkOutputMode(15).decision).toBe('cannot-tell');
    expect(checkOutputMode(3.5).decision).toBe('cannot-tell'); // NE 43 failure current
    expect(() => checkOutputMode(12, 2.5)).toThrow();
  });
});
