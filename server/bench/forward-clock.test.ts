import { describe, expect, it } from 'vitest';
import { SenderClock } from './forward-clock';

const lines = (...wall: number[]) => wall.map((wallMs) => ({ wallMs }));

describe('SenderClock', () => {
  it('places live lines by their age before the send, never after the arrival nor before the previous arrival or the bench floor', () => {
    const c = new SenderClock();
    // A first batch has no earlier arrival to reach back to: it sits at its arrival.
    expect(c.place({ sentWallMs: 9_000, lines: lines(8_800, 9_000) }, 4_000, 1_000_000, 0).tMs).toEqual([4_000, 4_000]);
    const p = c.place({ sentWallMs: 10_000, lines: lines(9_800, 9_900, 10_000) }, 5_000, 1_001_000, 0);
    expect(p.tMs).toEqual([4_800, 4_900, 5_000]);
    expect(p.backlog).toEqual([false, false, false]);
    // Floor: the bench's previous line at 4 950 ms keeps the order.
    const q = c.place({ sentWallMs: 11_000, lines: lines(10_800, 10_900, 11_000) }, 6_000, 1_002_000, 5_850);
    expect(q.tMs).toEqual([5_850, 5_900, 6_000]);
    const r = c.place({ sentWallMs: 12_000, lines: lines(11_800) }, 7_000, 1_003_000, 6_950);
    expect(r.tMs).toEqual([6_950]);
  });

  it('takes a line stamped after its own send as read at the send (a sender clock cannot place a line in the future)', () => {
    const p = new SenderClock().place({ sentWallMs: 10_000, lines: lines(60_000) }, 5_000, 1_000_000, 0);
    expect(p.tMs).toEqual([5_000]);
  });

  it('flags lines older than the live age as backlog and keeps them within the live age of the arrival', () => {
    const c = new SenderClock({ liveAgeMs: 2000 });
    c.place({ sentWallMs: 90_000, lines: [] }, 40_000, 990_000, 0);
    const p = c.place({ sentWallMs: 100_000, lines: lines(40_000, 99_000) }, 50_000, 1_000_000, 0);
    expect(p.backlog).toEqual([true, false]);
    expect(p.tMs[0]).toBe(48_000);
    expect(p.tMs[1]).toBe(49_000);
  });

  it('compressed timestamps cannot stretch a hold: 5 s claimed in 1 s of arrivals spans at most about 1 s of server time', () => {
    const c = new SenderClock();
    let floor = 0;
    const placed: number[] = [];
    // Ten batches 100 ms apart on the server, each claiming 500 ms.
    for (let i = 0; i < 10; i++) {
      const sent = 1_000_000 + (i + 1) * 500;
      const p = c.place({ sentWallMs: sent, lines: lines(sent - 400, sent - 200, sent) }, 10_000 + i * 100, 2_000_000 + i * 100, floor);
      placed.push(...p.tMs);
      floor = p.tMs.at(-1)!;
    }
    // Arrivals span 900 ms; the placed lines span no more.
    expect(placed.at(-1)! - placed[0]!).toBeLessThanOrEqual(900);
  });

  it('reports a clock 2.8 h ahead, and one that runs five times fast over the rate window', () => {
    const ahead = new SenderClock().place({ sentWallMs: 1_000_000 + 2.8 * 3600_000, lines: [] }, 0, 1_000_000, 0);
    expect(ahead.issues.map((i) => i.kind)).toEqual(['ahead']);
    expect(ahead.issues[0]!.message).toMatch(/2\.8 h ahead/);
    expect(ahead.skewMs).toBe(2.8 * 3600_000);
    const fast = new SenderClock({ rateWindowMs: 5000 });
    const issues: string[] = [];
    for (let i = 0; i <= 60; i++) issues.push(...fast.place({ sentWallMs: 1_000_000 + i * 500, lines: [] }, i * 100, 1_000_000 + i * 100, 0).issues.map((x) => x.kind));
    expect(issues).toContain('rate');
    const steady = new SenderClock({ rateWindowMs: 5000 });
    const none: string[] = [];
    for (let i = 0; i <= 60; i++) none.push(...steady.place({ sentWallMs: 1_000_000 + i * 100 + (i % 3) * 30, lines: [] }, i * 100, 1_000_000 + i * 100, 0).issues.map((x) => x.kind));
    expect(none).toEqual([]);
  });
});
