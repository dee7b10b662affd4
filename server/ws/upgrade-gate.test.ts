import { PassThrough } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { createUpgradeGate } from './upgrade-gate';

/** A promise with its resolve, to hold an admission open until the test lets it go. */
function deferred() {
  let resolve!: () => void;
  const promise = new Promise<void>((r) => (resolve = r));
  return { promise, resolve };
}
const tick = () => new Promise((r) => setImmediate(r));

describe('upgrade gate', () => {
  it('admits at most `atOnce` upgrades at a time, in arrival order', async () => {
    const gate = createUpgradeGate({ atOnce: 2, maxWaiting: 10 });
    const holds = Array.from({ length: 5 }, deferred);
    const started: number[] = [];
    let running = 0;
    let most = 0;
    holds.forEach((h, i) =>
      gate.enter(new PassThrough(), async () => {
        started.push(i);
        most = Math.max(most, ++running);
        await h.promise;
        running--;
      }),
    );
    await tick();
    expect(started).toEqual([0, 1]);
    holds[1]!.resolve();
    await tick();
    await tick();
    expect(started).toEqual([0, 1, 2]);
    for (const h of holds) h.resolve();
    for (let i = 0; i < 6; i++) await tick();
    expect(started).toEqual([0, 1, 2, 3, 4]);
    expect(most).toBe(2);
  });

  it('refuses an upgrade when too many are waiting, and frees a turn whose admission throws', async () => {
    const errors: unknown[] = [];
    const gate = createUpgradeGate({ atOnce: 1, maxWaiting: 2, onError: (e) => errors.push(e) });
    const failing = new PassThrough();
    const hold = deferred();
    let ran = 0;
    expect(gate.enter(new PassThrough(), () => hold.promise)).toBe(true);
    await tick();
    expect(gate.enter(new PassThrough(), async () => void ran++)).toBe(true);
    expect(gate.enter(failing, async () => Promise.reject(new Error('boom')))).toBe(true);
    expect(gate.enter(new PassThrough(), async () => void ran++)).toBe(false);
    hold.resolve();
    for (let i = 0; i < 6; i++) await tick();
    expect(ran).toBe(1);
    expect(errors.map((e) => (e as Error).message)).toEqual(['boom']);
    expect(failing.destroyed).toBe(true);
    expect(gate.enter(new PassThrough(), async () => void ran++)).toBe(true);
    for (let i = 0; i < 4; i++) await tick();
    expect(ran).toBe(2);
  });

  it('drops a waiting upgrade whose socket closed, without running it', async () => {
    const gate = createUpgradeGate({ atOnce: 1, maxWaiting: 10 });
    const hold = deferred();
    let ran = 0;
    gate.enter(new PassThrough(), () => hold.promise);
    const leaving = new PassThrough();
    gate.enter(leaving, async () => void ran++);
    leaving.destroy();
    await tick();
    expect(gate.stats().waiting).toBe(0);
    hold.resolve();
    for (let i = 0; i < 4; i++) await tick();
    expect(ran).toBe(0);
  });
  it('caps the upgrades waiting from one address, so one peer cannot fill the queue for the others', async () => {
    const gate = createUpgradeGate({ atOnce: 1, maxWaiting: 10, maxWaitingPerAddress: 3 });
    const hold = deferred();
    const ran: string[] = [];
    expect(gate.enter(new PassThrough(), () => hold.promise, '203.0.113.9')).toBe(true);
    await tick();
    const flood = Array.from({ length: 10 }, () => new PassThrough());
    const taken = flood.map((s) => gate.enter(s, async () => void ran.push('flood'), '203.0.113.9'));
    expect(taken).toEqual([true, true, true, false, false, false, false, false, false, false]);
    expect(gate.stats().waiting).toBe(3);
    // Another peer still gets in line.
    expect(gate.enter(new PassThrough(), async () => void ran.push('other'), '198.51.100.7')).toBe(true);
    // A waiting socket from the flooding address that closes frees its place for that address.
    flood[0]!.destroy();
    await tick();
    expect(gate.enter(new PassThrough(), async () => void ran.push('flood'), '203.0.113.9')).toBe(true);
    expect(gate.enter(new PassThrough(), async () => void ran.push('flood'), '203.0.113.9')).toBe(false);
    hold.resolve();
    for (let i = 0; i < 12; i++) await tick();
    expect(ran).toEqual(['flood', 'flood', 'other', 'flood']);
    // Once its upgrades have had their turn, the address may queue again.
    expect(gate.enter(new PassThrough(), async () => void ran.push('again'), '203.0.113.9')).toBe(true);
    for (let i = 0; i < 4; i++) await tick();
    expect(ran).toHaveLength(5);
    expect(gate.stats().addressesWaiting).toBe(0);
  });
  it('does not limit by address an upgrade with no address key (a peer on this host), only by the whole queue', async () => {
    const gate = createUpgradeGate({ atOnce: 1, maxWaiting: 6, maxWaitingPerAddress: 3 });
    const hold = deferred();
    gate.enter(new PassThrough(), () => hold.promise);
    await tick();
    const taken = Array.from({ length: 7 }, () => gate.enter(new PassThrough(), async () => {}));
    expect(taken).toEqual([true, true, true, true, true, true, false]);
    hold.resolve();
  });
});
