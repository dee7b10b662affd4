import { describe, expect, it } from 'vitest';
import { LiveSampleStore, SampleRing } from './live-samples';

describe('SampleRing', () => {
  it('keeps the newest samples once full, oldest first', () => {
    const r = new SampleRing(3);
    for (let i = 1; i <= 5; i++) r.push(i * 100, i);
    expect(r.size).toBe(3);
    const out = { t: [] as number[], v: [] as (number | null)[] };
    expect(r.copySince(0, out)).toBe(3);
    expect(out.t).toEqual([300, 400, 500]);
    expect(out.v).toEqual([3, 4, 5]);
    expect(r.latest()).toEqual({ wallMs: 500, value: 5 });
  });

  it('copies only the window asked for, and keeps a missing reading as null', () => {
    const r = new SampleRing(8);
    r.push(1000, 1);
    r.push(2000, null);
    r.push(3000, 3);
    const out = { t: [9, 9, 9, 9], v: [9, 9, 9, 9] as (number | null)[] };
    expect(r.copySince(1500, out)).toBe(2);
    expect(out).toEqual({ t: [2000, 3000], v: [null, 3] });
  });

  it('refuses a capacity that is not a positive integer', () => {
    expect(() => new SampleRing(0)).toThrow(RangeError);
  });
});

describe('LiveSampleStore', () => {
  it('notifies listeners at most once per frame however many samples arrive', () => {
    const frames: Array<() => void> = [];
    const store = new LiveSampleStore(16, (cb) => frames.push(cb));
    let calls = 0;
    store.subscribe(() => calls++);
    for (let i = 0; i < 50; i++) store.push(i % 2 ? 'current' : 'pressure', i, i, 'kPa');
    expect(frames).toHaveLength(1);
    frames.shift()!();
    expect(calls).toBe(1);
    expect(store.rings.pressure.size).toBe(16);
    expect(store.pressureUnit).toBe('kPa');
    store.push('current', 99, 12, 'mA');
    expect(frames).toHaveLength(1);
  });

  it('clears when the bench changes and bumps the version', () => {
    const store = new LiveSampleStore(4, () => {});
    store.push('pressure', 1, 1);
    const v = store.getVersion();
    store.setBench('bench-2');
    expect(store.rings.pressure.size).toBe(0);
    expect(store.getVersion()).toBeGreaterThan(v);
    store.setBench('bench-2');
    expect(store.bench).toBe('bench-2');
  });
});
