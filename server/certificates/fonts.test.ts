import { describe, expect, it } from 'vitest';
import { certificateFonts, fitToLatin } from './fonts';

describe('certificate fonts', () => {
  it('reads the bundled WOFF files', () => {
    const f = certificateFonts();
    for (const bytes of Object.values(f)) expect(bytes.subarray(0, 4).toString('latin1')).toBe('wOFF');
  });

  it('maps text outside the latin subset to forms it can draw', () => {
    expect(fitToLatin('inH₂O at 68 °F, ±0.5 %, 6½ digit — ok')).toBe('inH2O at 68 °F, ±0.5 %, 6½ digit — ok');
    expect(fitToLatin('U ≤ T, √x')).toBe('U <= T, sqrt x');
    expect(fitToLatin('Łódź')).toBe('Lódz');
    expect(fitToLatin('Dvořák')).toBe('Dvorák');
    expect(fitToLatin('水')).toBe('?');
    expect(fitToLatin('a\nb')).toBe('a\nb');
  });
});
