import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { checkEdgeLine, MAX_FORWARDED_LINE } from './clean-line';

describe('checkEdgeLine', () => {
  it('passes a plain reading and strips one terminator', () => {
    expect(checkEdgeLine('+1.200000E-02')).toEqual({ ok: true, line: '+1.200000E-02' });
    expect(checkEdgeLine('12.5 kPa\r\n')).toEqual({ ok: true, line: '12.5 kPa' });
    expect(checkEdgeLine('12.5\tkPa\r')).toEqual({ ok: true, line: '12.5\tkPa' });
  });

  it('refuses NUL and every other C0 control but tab, DEL and C1', () => {
    for (let c = 0; c < 0x20; c++) {
      if (c === 0x09) continue;
      const r = checkEdgeLine(`A${String.fromCharCode(c)}B`);
      expect(r.ok, `0x${c.toString(16)}`).toBe(false);
      if (!r.ok) expect(r.reason).toBe('control-character');
    }
    expect(checkEdgeLine('A\u007fB').ok).toBe(false);
    expect(checkEdgeLine('A\u0085B').ok).toBe(false);
    const nul = checkEdgeLine('A\u0000B');
    expect(nul).toEqual({ ok: false, reason: 'control-character', preview: 'A\\x00B' });
  });

  it('refuses lone surrogates and keeps paired ones', () => {
    expect(checkEdgeLine('\ud800abc')).toMatchObject({ ok: false, reason: 'invalid-text' });
    expect(checkEdgeLine('abc\udc00')).toMatchObject({ ok: false, reason: 'invalid-text' });
    expect(checkEdgeLine('5 \ud83d\ude00')).toEqual({ ok: true, line: '5 \ud83d\ude00' });
  });

  it('refuses overlong and empty lines', () => {
    expect(checkEdgeLine('1'.repeat(10_000))).toMatchObject({ ok: false, reason: 'overlong' });
    expect(checkEdgeLine('1'.repeat(MAX_FORWARDED_LINE)).ok).toBe(true);
    expect(checkEdgeLine('\r\n')).toMatchObject({ ok: false, reason: 'empty' });
  });

  it('never throws, and what it passes holds no control character (fast-check)', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary', maxLength: 400 }), (s) => {
        const r = checkEdgeLine(s);
        if (r.ok) {
          // eslint-disable-next-line no-control-regex
          expect(/[\u0000-\u0008\u000a-\u001f\u007f-\u009f]/.test(r.line)).toBe(false);
          expect(r.line.length).toBeLessThanOrEqual(MAX_FORWARDED_LINE);
        } else expect(r.preview.length).toBeLessThanOrEqual(80);
      }),
    );
  });
});
