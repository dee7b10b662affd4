import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';
import { afterEach, describe, expect, it } from 'vitest';
import { adaptiveLimit, neverShed, shedLoad, SHED_RETRY_AFTER_SECONDS } from './shed-load';

let server: Server | undefined;
afterEach(async () => {
  await new Promise<void>((r) => (server ? server.close(() => r()) : r()));
  server = undefined;
});

/** An app whose every route waits until `release()`; counts the requests that reached a handler. */
async function start(maxInFlight: number) {
  let release!: () => void;
  let gate = new Promise<void>((r) => (release = r));
  let reached = 0;
  const shedder = shedLoad({ maxInFlight, exempt: neverShed });
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
  return {
    base,
    stats: shedder.stats,
    reached: () => reached,
    waitInFlight,
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

describe('adaptive in-flight limit (AIMD on the served latency)', () => {
  it('cuts the limit by a tenth per target period while requests are slow, never below the floor, and climbs back while they are quick', () => {
    let t = 0;
    const limit = adaptiveLimit({ max: 48, min: 4, targetMs: 100, now: () => t });
    expect(limit.value).toBe(48);
    limit.completed(250);
    expect(limit.value).toBe(43); // 48 × 0.9 = 43.2
    limit.completed(250); // same period: one burst does not collapse it
    expect(limit.value).toBe(43);
    for (let i = 0; i < 60; i++) {
      t += 100;
      limit.completed(400);
    }
    expect(limit.value).toBe(4);
    // Quick requests add 1/limit each: about one step per limit's worth of completions.
    for (let i = 0; i < 4; i++) limit.completed(20);
    expect(limit.value).toBe(4);
    for (let i = 0; i < 40; i++) limit.completed(20);
    expect(limit.value).toBeGreaterThanOrEqual(8);
    for (let i = 0; i < 5000; i++) limit.completed(20);
    expect(limit.value).toBe(48);
  });

  it('keeps a fixed limit when no target is set', () => {
    const limit = adaptiveLimit({ max: 10, min: 4, targetMs: 0, now: () => 0 });
    limit.completed(10_000);
    expect(limit.value).toBe(10);
  });

  it('sheds at the adapted limit: slow served requests lower it, and exempt requests neither count towards it nor lower it', async () => {
    let t = 0;
    const shedder = shedLoad({ maxInFlight: 10, targetMs: 100, minInFlight: 2, exempt: neverShed, now: () => t });
    const app = express();
    app.use(shedder);
    app.all(/.*/, (_req, res) => {
      t += 500; // every request "takes" 500 ms on the injected clock
      res.json({ ok: true });
    });
    server = await new Promise<Server>((resolve) => {
      const s = app.listen(0, '127.0.0.1', () => resolve(s));
    });
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    for (let i = 0; i < 3; i++) expect((await fetch(`${base}/api/health`)).status).toBe(200);
    expect(shedder.stats().limit).toBe(10);
    for (let i = 0; i < 3; i++) expect((await fetch(`${base}/api/jobs`)).status).toBe(200);
    expect(shedder.stats().limit).toBe(7); // 10 → 9 → 8.1 → 7.29
  });
});
