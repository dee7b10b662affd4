import { describe, expect, it } from 'vitest';
import { ChannelAccumulator, mergeMoments, NO_MOMENTS, slopeOfMoments } from './hold-stats';

function fed(samples: [number, number][]): ChannelAccumulator {
  const acc = new ChannelAccumulator();
  for (const [t, y] of samples) acc.push(t, y);
  return acc;
}

describe('mergeMoments', () => {
  // Samples of a line with a known slope plus a fixed wobble, in three uneven parts.
  const samples: [number, number][] = Array.from({ length: 41 }, (_, i) => [1000 + i * 250 + (i % 3) * 17, 5 + 0.002 * i * 250 + ((i * 7) % 5) * 0.01]);
  const parts = [samples.slice(0, 7), samples.slice(7, 30), samples.slice(30)];

  it('gives the moments of all the samples from the moments of the parts', () => {
    const whole = fed(samples).moments();
    const merged = parts.map((p) => fed(p).moments()).reduce(mergeMoments, NO_MOMENTS);
    expect(merged.n).toBe(whole.n);
    for (const k of ['meanT', 'meanY', 'm2t', 'm2y', 'cty'] as const) expect(merged[k]).toBeCloseTo(whole[k], 6);
    expect(slopeOfMoments(merged).slope).toBeCloseTo(slopeOfMoments(whole).slope, 12);
    expect(slopeOfMoments(merged).se).toBeCloseTo(slopeOfMoments(whole).se, 12);
  });

  it('has no samples as its identity, on either side', () => {
    const m = fed(parts[1]!).moments();
    expect(mergeMoments(NO_MOMENTS, m)).toEqual(m);
    expect(mergeMoments(m, NO_MOMENTS)).toEqual(m);
    expect(mergeMoments(NO_MOMENTS, NO_MOMENTS)).toEqual(NO_MOMENTS);
  });
});
