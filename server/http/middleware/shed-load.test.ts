import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';
import { afterEach, describe, expect, it } from 'vitest';
import { type ShedOptions, adaptiveLimit, controlledDelay, neverShed, shedLoad, SHED_RETRY_AFTER_SECONDS, STANDING_QUEUE_WAIT_MS } from './shed-load';

let server: Server | undefined;
afterEach(async () => {
  await new Promise<void>((r) => (server ? server.close(() => r()) : r()));
  server = undefined;
});

/** An app whose every route waits until `release()`; counts the requests that reached a handler. */
async function start(maxInFlight: number, more: Partial<ShedOptions> = {}) {
  let release!: () => void;
  let gate = new Promise<void>((r) => (release = r));
  let reached = 0;
  const shedder = shedLoad({ maxInFlight, exempt: neverShed, ...more });
  const app = express();
  app.use(shedder);
  app.all(/.*/, async (_req, res) => {
    reached++;
    await gate;
    res.json({ ok: true });
  });
  server = await new Promise<Server>((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const waitInFlight = async (n: number) => {
    while (shedder.stats().inFlight < n) await new Promise((r) => setTimeout(r, 5));
  };
  const waitWaiting = async (n: number) => {
    while (shedder.stats().waiting < n) await new Promise((r) => setTimeout(r, 5));
  };
  return {
    base,
    stats: shedder.stats,
    reached: () => reached,
    waitInFlight,
    waitWaiting,
    release: () => {
      release();
      gate = new Promise<void>((r) => (release = r));
    },
  };
}

describe('load shedding', () => {
  it('answers 503 with Retry-After past the in-flight limit, before the handler runs, and serves again once load falls', async () => {
    const app = await start(2);
    const held = [fetch(`${app.base}/api/jobs`), fetch(`${app.base}/api/instruments`)];
    await app.waitInFlight(2);
    const shed = await fetch(`${app.base}/api/jobs`);
    expect(shed.status).toBe(503);
    expect(shed.headers.get('retry-after')).toBe(String(SHED_RETRY_AFTER_SECONDS));
    expect(await shed.json()).toEqual({ error: { code: 'overloaded', message: 'The server is busy; try again in a moment' } });
    expect(app.reached()).toBe(2);
    expect(app.stats().shed).toBe(1);
    app.release();
    expect((await Promise.all(held)).map((r) => r.status)).toEqual([200, 200]);
    const after = fetch(`${app.base}/api/jobs`);
    await app.waitInFlight(1);
    app.release();
    expect((await after).status).toBe(200);
  });

  it('never sheds the health check, sign-in, lifting a lock, run control and captures (they still count)', async () => {
    const app = await start(1);
    const held = fetch(`${app.base}/api/jobs`);
    await app.waitInFlight(1);
    const exempt = [
      fetch(`${app.base}/api/health`),
      fetch(`${app.base}/api/auth/login`, { method: 'POST' }),
      fetch(`${app.base}/api/users/00000000-0000-4000-8000-000000000000/unlock`, { method: 'POST' }),
      fetch(`${app.base}/api/runs/00000000-0000-4000-8000-000000000000/points/3/capture`, { method: 'POST' }),
      fetch(`${app.base}/api/jobs/00000000-0000-4000-8000-000000000000/runs`, { method: 'POST' }),
    ];
    await app.waitInFlight(6);
    expect((await fetch(`${app.base}/api/runs/00000000-0000-4000-8000-000000000000`)).status).toBe(503); // reading a run is not exempt
    app.release();
    expect((await Promise.all([held, ...exempt])).map((r) => r.status)).toEqual([200, 200, 200, 200, 200, 200]);
  });

  it('is off at 0', async () => {
    const app = await start(0);
    const held = Array.from({ length: 5 }, () => fetch(`${app.base}/api/jobs`));
    await app.waitInFlight(5);
    app.release();
    expect((await Promise.all(held)).every((r) => r.status === 200)).toBe(true);
  });
});

describe('waiting for a turn (controlled delay)', () => {
  it('lets a burst past the limit wait for a turn instead of shedding it, oldest first', async () => {
    const app = await start(2, { targetMs: 1000, minInFlight: 2 });
    const order: string[] = [];
    const get = (p: string) => fetch(`${app.base}${p}`).then((r) => (order.push(p), r.status));
    const first = [get('/api/jobs'), get('/api/instruments')];
    await app.waitInFlight(2);
    const later = [get('/api/standards'), get('/api/audit')];
    await app.waitWaiting(2);
    expect(app.reached()).toBe(2); // the waiting ones have not reached a handler
    app.release();
    expect(await Promise.all(first)).toEqual([200, 200]);
    await app.waitInFlight(2);
    expect(app.stats().waiting).toBe(0);
    app.release();
    expect(await Promise.all(later)).toEqual([200, 200]);
    expect(app.stats().shed).toBe(0);
  });

  it('sheds a request whose wait is up (503 with Retry-After, no handler run), and one more than may wait at once', async () => {
    const app = await start(1, { targetMs: 150, minInFlight: 1, maxWaiting: 1 });
    const held = fetch(`${app.base}/api/jobs`);
    await app.waitInFlight(1);
    const t0 = performance.now();
    const waiting = fetch(`${app.base}/api/instruments`);
    await app.waitWaiting(1);
    const tooMany = await fetch(`${app.base}/api/standards`);
    expect(tooMany.status).toBe(503);
    const timedOut = await waiting;
    expect(timedOut.status).toBe(503);
    expect(timedOut.headers.get('retry-after')).toBe(String(SHED_RETRY_AFTER_SECONDS));
    expect(performance.now() - t0).toBeGreaterThanOrEqual(140);
    expect(app.reached()).toBe(1);
    expect(app.stats()).toMatchObject({ shed: 2, waiting: 0 });
    app.release();
    expect((await held).status).toBe(200);
  });

  it('allows a newcomer the whole interval while the queue has been empty lately, and only a few ms once it has stood that long', () => {
    let t = 0;
    const delay = controlledDelay({ intervalMs: 100, standingMs: STANDING_QUEUE_WAIT_MS, now: () => t });
    expect(delay.timeoutMs()).toBe(100);
    t = 90; // a queue since 0, for less than an interval: a burst
    expect(delay.timeoutMs()).toBe(100);
    t = 101; // not empty for a whole interval: a standing queue
    expect(delay.timeoutMs()).toBe(STANDING_QUEUE_WAIT_MS);
    delay.empty();
    t = 150;
    expect(delay.timeoutMs()).toBe(100);
  });
});

describe('adaptive in-flight limit (AIMD on the served latency)', () => {
  it('starts at the floor, climbs while requests are quick and the limit is in use, and is cut by a tenth per target period while they are slow, never below the floor', () => {
    let t = 0;
    const limit = adaptiveLimit({ max: 48, min: 4, targetMs: 100, now: () => t });
    expect(limit.value).toBe(4);
    // Quick requests add 1/limit each while at least half the limit is in flight: about one step per limit's worth.
    for (let i = 0; i < 5; i++) limit.completed(20, 4);
    expect(limit.value).toBe(5);
    // Quick answers at light load (one in flight of five) say nothing: no climb.
    for (let i = 0; i < 200; i++) limit.completed(20, 1);
    expect(limit.value).toBe(5);
    for (let i = 0; i < 5000; i++) limit.completed(20, 48);
    expect(limit.value).toBe(48);
    limit.completed(250, 48);
    expect(limit.value).toBe(43); // 48 × 0.9 = 43.2
    limit.completed(250, 48); // same period: one burst does not collapse it
    expect(limit.value).toBe(43);
    for (let i = 0; i < 60; i++) {
      t += 100;
      limit.completed(400, 48);
    }
    expect(limit.value).toBe(4);
  });

  it('keeps a fixed limit when no target is set', () => {
    const limit = adaptiveLimit({ max: 10, min: 4, targetMs: 0, now: () => 0 });
    limit.completed(10_000, 10);
    expect(limit.value).toBe(10);
  });

  it('sheds at the adapted limit: slow served requests lower it, and exempt requests neither count towards it nor lower it', async () => {
    let t = 0;
    const shedder = shedLoad({ maxInFlight: 10, targetMs: 100, minInFlight: 2, exempt: neverShed, now: () => t });
    const app = express();
    app.use(shedder);
    let quick = true;
    app.all(/.*/, async (_req, res) => {
      if (quick) await new Promise((r) => setTimeout(r, 20)); // held a moment, so a burst fills the limit
      t += quick ? 10 : 500; // each request "takes" 10 or 500 ms on the injected clock
      res.json({ ok: true });
    });
    server = await new Promise<Server>((resolve) => {
      const s = app.listen(0, '127.0.0.1', () => resolve(s));
    });
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    const burst = async (n: number) => (await Promise.all(Array.from({ length: n }, () => fetch(`${base}/api/jobs`)))).map((r) => r.status);
    expect(shedder.stats().limit).toBe(2);
    // Quick bursts that fill the limit raise it (the rest of each burst waits its turn, none shed).
    for (let i = 0; i < 10; i++) expect(await burst(6)).toEqual([200, 200, 200, 200, 200, 200]);
    const raised = shedder.stats().limit;
    expect(raised).toBeGreaterThan(4);
    quick = false;
    for (let i = 0; i < 3; i++) expect((await fetch(`${base}/api/health`)).status).toBe(200);
    expect(shedder.stats().limit).toBe(raised);
    for (let i = 0; i < 3; i++) expect((await fetch(`${base}/api/jobs`)).status).toBe(200);
    // Three cuts by a tenth (the limit in force is the floor of a fractional limit between raised and raised + 1).
    expect(shedder.stats().limit).toBeGreaterThanOrEqual(Math.floor(raised * 0.9 ** 3));
    expect(shedder.stats().limit).toBeLessThanOrEqual(Math.floor((raised + 1) * 0.9 ** 3));
  });
});
