import { describe, expect, it } from 'vitest';
import { FLOW_UNITS, PRESSURE_UNIT_IDS } from '../calc';
import {
  addDays,
  dateInZone,
  daysBetween,
  dpDecimals,
  dueState,
  flowAtDp,
  flowDecimals,
  formatDate,
  formatDateTime,
  formatFixed,
  formatFlow,
  formatNumber,
  formatOffset,
  formatRange,
  formatRootDeparture,
  formatSigned,
  formatTime,
  isTimeZone,
  MINUS,
  todayInZone,
  uncertaintyLabel,
  unitLabel,
} from './index';

describe('numbers: sign rule', () => {
  it('writes negatives with U+2212 and positives plain unless signed', () => {
    expect(formatFixed(-1.5, 2)).toBe('\u22121.50');
    expect(formatFixed(1.5, 2)).toBe('1.50');
    expect(formatSigned(1.5, 2)).toBe('+1.50');
    expect(formatSigned(-0.125, 3)).toBe(`${MINUS}0.125`);
    expect(formatNumber(-12.34)).toBe('−12.34');
    expect(formatNumber(2.5, 4, { signed: true })).toBe('+2.5');
    expect(formatFixed(-1, 0)).not.toContain('-');
  });

  it('never writes a negative or signed zero', () => {
    for (const v of [0, -0, -0.0004, 0.0004, -1e-12, 1e-12]) {
      expect(formatFixed(v, 3)).toBe('0.000');
      expect(formatSigned(v, 3)).toBe('0.000');
      expect(formatNumber(v, 3)).toBe('0');
      expect(formatNumber(v, 3, { signed: true })).toBe('0');
      expect(formatFixed(v, 0)).toBe('0');
      expect(formatSigned(v, 0)).toBe('0');
    }
    // Rounds away from zero at the decimals shown: the sign stays.
    expect(formatSigned(-0.0005, 3)).toBe(`${MINUS}0.001`);
    expect(formatSigned(0.0006, 3)).toBe('+0.001');
  });

  it('writes — for missing or non-finite values', () => {
    expect(formatFixed(null, 2)).toBe('—');
    expect(formatFixed(undefined, 2)).toBe('—');
    expect(formatNumber(Number.NaN)).toBe('—');
    expect(formatSigned(Number.POSITIVE_INFINITY, 1)).toBe('—');
  });

  it('trims trailing zeros in formatNumber only', () => {
    expect(formatNumber(12.34)).toBe('12.34');
    expect(formatNumber(10)).toBe('10');
    expect(formatNumber(100, 2)).toBe('100');
    expect(formatFixed(10, 2)).toBe('10.00');
  });
});

describe('numbers: DP decimals from the range resolution (last digit ≤ 0.01 % of span)', () => {
  it('gives one rule for screens and certificate', () => {
    expect(dpDecimals(100)).toBe(2); // 100.00: step 0.01 = 0.01 % of 100
    expect(dpDecimals(99.9)).toBe(3);
    expect(dpDecimals(25)).toBe(3);
    expect(dpDecimals(2.88918)).toBe(4);
    expect(dpDecimals(1000)).toBe(1);
    expect(dpDecimals(25_000)).toBe(0);
    expect(dpDecimals(0.5)).toBe(5);
    expect(dpDecimals(0.001)).toBe(6); // clamped
    expect(dpDecimals(-100)).toBe(2); // reversed range: span magnitude
    expect(dpDecimals(0)).toBe(3);
  });

  it('never shows a step coarser than 0.01 % of span nor a digit below it', () => {
    for (const span of [0.37, 1, 2.5, 10, 63, 100, 250, 1000, 2500, 10_000]) {
      const step = 10 ** -dpDecimals(span);
      expect(step).toBeLessThanOrEqual(span * 1e-4 * (1 + 1e-9));
      expect(step * 10).toBeGreaterThan(span * 1e-4);
    }
  });
});

describe('units: one spelling, from the product unit list', () => {
  it('spells water columns with their reference temperature and a plain digit', () => {
    expect(unitLabel('inH2O@68F')).toBe('inH2O at 68 °F');
    expect(unitLabel('mmH2O@4C')).toBe('mmH2O at 4 °C');
    expect(unitLabel('kgf/cm2')).toBe('kgf/cm²');
    expect(unitLabel('m3/h')).toBe('m³/h');
    expect(unitLabel('mA')).toBe('mA');
    expect(formatRange(0, 100, 'inH2O@68F')).toBe('0–100 inH2O at 68 °F');
    expect(formatRange(-250, 250, 'mbar')).toBe('−250 – 250 mbar');
  });

  it('gives every pressure and flow unit a label the certificate font draws, never upper case', () => {
    const labels = [...PRESSURE_UNIT_IDS, ...FLOW_UNITS].map(unitLabel);
    expect(new Set(labels).size).toBe(labels.length);
    for (const l of labels) {
      // Latin-1 plus U+2212: what the certificate's font subset holds (server/certificates/fonts.ts).
      expect([...l].every((c) => c.codePointAt(0)! <= 0xff || c === MINUS)).toBe(true);
      expect(l).not.toMatch(/INH|MA\b/);
      expect(l).not.toMatch(/@/);
    }
  });

  it('writes the coverage label in lower case k', () => {
    expect(uncertaintyLabel(2)).toBe('U (k=2)');
    expect(uncertaintyLabel(2.2834)).toBe('U (k=2.28)');
    expect(uncertaintyLabel(null)).toBe('U');
  });
});

describe('dates: one style in the site zone', () => {
  it('knows IANA zones', () => {
    expect(isTimeZone('Europe/London')).toBe(true);
    expect(isTimeZone('America/Chicago')).toBe(true);
    expect(isTimeZone('Mars/Olympus')).toBe(false);
    expect(isTimeZone('')).toBe(false);
  });

  it('takes "today" in the zone across midnight', () => {
    // 2026-12-02 23:30 UTC is already 2026-12-03 in Auckland (UTC+13 in summer) and still 12-02 in Chicago.
    const t = new Date('2026-12-02T23:30:00Z');
    expect(todayInZone('UTC', t)).toBe('2026-12-02');
    expect(todayInZone('Pacific/Auckland', t)).toBe('2026-12-03');
    expect(todayInZone('America/Chicago', t)).toBe('2026-12-02');
    // 2026-12-03 05:30 UTC is still 2026-12-02 in Chicago (UTC−6).
    expect(todayInZone('America/Chicago', new Date('2026-12-03T05:30:00Z'))).toBe('2026-12-02');
    expect(todayInZone('America/Chicago', new Date('2026-12-03T06:00:00Z'))).toBe('2026-12-03');
  });

  it('follows DST changes (EU 2026: 29 March, 25 October at 01:00 UTC)', () => {
    // Before and after the spring change in London: 00:59 UTC is 00:59 GMT, 01:00 UTC is 02:00 BST.
    expect(formatDateTime('2026-03-29T00:59:00Z', 'Europe/London')).toBe('2026-03-29 00:59');
    expect(formatDateTime('2026-03-29T01:00:00Z', 'Europe/London')).toBe('2026-03-29 02:00');
    expect(formatDateTime('2026-03-29T01:00:00Z', 'Europe/London', { withZone: true })).toBe('2026-03-29 02:00 UTC+1');
    // Midnight in summer time: 23:30 UTC on 28 June is 00:30 BST on 29 June.
    expect(todayInZone('Europe/London', new Date('2026-06-28T23:30:00Z'))).toBe('2026-06-29');
    // The same instant in winter: 23:30 UTC on 28 December is still the 28th.
    expect(todayInZone('Europe/London', new Date('2026-12-28T23:30:00Z'))).toBe('2026-12-28');
    // Autumn change: 00:30 UTC and 01:30 UTC on 25 October both read 01:30 on the wall, offsets differ.
    expect(formatDateTime('2026-10-25T00:30:00Z', 'Europe/London', { withZone: true })).toBe('2026-10-25 01:30 UTC+1');
    expect(formatDateTime('2026-10-25T01:30:00Z', 'Europe/London', { withZone: true })).toBe('2026-10-25 01:30 UTC');
  });

  it('formats dates and times in one style', () => {
    expect(formatDate('2026-12-02')).toBe('2026-12-02');
    expect(formatDate('2026-12-02T23:30:00Z', 'Asia/Tokyo')).toBe('2026-12-03');
    expect(formatDate(null)).toBe('—');
    expect(formatDate('not a date')).toBe('—');
    expect(formatDateTime('2026-12-02T09:36:07Z', 'UTC')).toBe('2026-12-02 09:36');
    expect(formatDateTime('2026-12-02T09:36:07Z', 'UTC', { seconds: true, withZone: true })).toBe('2026-12-02 09:36:07 UTC');
    expect(formatDateTime('2026-12-02T09:36:07Z', 'America/New_York', { withZone: true })).toBe(`2026-12-02 04:36 UTC${MINUS}5`);
    expect(formatDateTime('2026-12-02T09:36:07Z', 'Asia/Kolkata', { withZone: true })).toBe('2026-12-02 15:06 UTC+5:30');
    expect(formatDateTime('2026-12-02T09:36:07Z', 'No/Such')).toBe('2026-12-02 09:36'); // unknown zone: UTC
    expect(formatTime(Date.parse('2026-12-02T09:36:07Z'), 'UTC', true)).toBe('09:36:07');
    expect(formatOffset(-330)).toBe(`UTC${MINUS}5:30`);
    expect(dateInZone('nonsense', 'UTC')).toBe('');
  });

  it('does calendar arithmetic and due states on dates', () => {
    expect(addDays('2026-12-31', 1)).toBe('2027-01-01');
    expect(daysBetween('2026-12-02', '2026-12-05')).toBe(3);
    expect(daysBetween('2026-03-28', '2026-03-30')).toBe(2); // across a DST change: calendar days
    expect(dueState('2026-12-01', '2026-12-02')).toBe('expired');
    expect(dueState('2026-12-02', '2026-12-02')).toBe('due-soon');
    expect(dueState('2027-06-02', '2026-12-02')).toBe('in-date');
  });
});

describe('flow in engineering units', () => {
  // FT-101 of the demo data (invented): 102.3 mm pipe, 61.4 mm bore, flange taps, hot water.
  const ins = {
    lrv: 0,
    urv: 100,
    unit: 'inH2O@68F' as const,
    element: { spec: { D: 0.1023, d: 0.0614, taps: 'flange' as const, rho: 958, mu: 0.00028 }, flowUnit: 'm3/h' as const },
  };

  it('gives flow at a DP with the square-root departure, nothing at or below zero DP', () => {
    const full = flowAtDp(ins, 100)!;
    const quarter = flowAtDp(ins, 6.25)!; // 25 % flow
    expect(full.unit).toBe('m3/h');
    expect(full.pureRootDeparturePct).toBeCloseTo(0, 12);
    // Constant C: q ∝ √Δp, so 25 % flow is q_full/4 up to the change in C with Re (a fraction of a per cent).
    expect(quarter.flow / full.flow).toBeGreaterThan(0.24);
    expect(quarter.flow / full.flow).toBeLessThan(0.26);
    // C rises as Re falls, so the constant-C root reads low at low flow (ISO 5167-2 eq. 4 behaviour).
    expect(quarter.pureRootDeparturePct!).toBeLessThan(0);
    expect(flowAtDp(ins, 0)).toBeUndefined();
    expect(flowAtDp(ins, -1)).toBeUndefined();
  });

  it('formats flow with its unit spelling and a signed departure', () => {
    expect(flowDecimals(123.4)).toBe(2);
    expect(formatFlow(12.3456, 'm3/h', 2)).toBe('12.35 m³/h');
    expect(formatFlow(null, 'm3/h', 2)).toBe('—');
    expect(formatRootDeparture(-0.4123)).toBe(`${MINUS}0.41 %`);
    expect(formatRootDeparture(0.001)).toBe('0.00 %');
    expect(formatRootDeparture(null)).toBe('—');
  });
});
