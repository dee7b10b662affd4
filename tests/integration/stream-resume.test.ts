/**
 * The WebSocket stream on the booted app: refused without a session or from another site;
 * a client killed mid-stream that resumes with `since` and its epoch sees every sequence number
 * exactly once; a resume from another epoch or from beyond the latest seq gets `stream.reset`.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { StreamMessageSchema, type StreamMessage } from '../../shared/schemas/stream';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
let tech: ApiClient;
beforeAll(async () => {
  srv = await startTestServer({ env: { HOLD_SECONDS: '1' } });
  tech = new ApiClient(srv.url);
  await tech.login(demoEmail('tech'));
}, 240_000);
afterAll(async () => {
  await srv?.close();
});

const wsUrl = (since?: number, epoch?: string) =>
  `${srv.url.replace('http', 'ws')}/ws${since === undefined ? '' : `?since=${since}`}${epoch === undefined ? '' : `&epoch=${epoch}`}`;

/** Opens a socket; resolves with the HTTP status when the upgrade is refused. */
function tryOpen(headers: Record<string, string>): Promise<{ opened: boolean; status?: number }> {
  return new Promise((resolve) => {
    const ws = new WebSocket(wsUrl(), { headers });
    ws.on('open', () => {
      ws.terminate();
      resolve({ opened: true });
    });
    ws.on('unexpected-response', (_req, res) => {
      resolve({ opened: false, status: res.statusCode });
      res.resume();
    });
    ws.on('error', () => resolve({ opened: false }));
  });
}

/** A client that records every message it gets. */
function collect(since?: number, epoch: string | null = srv.bench.epoch) {
  const ws = new WebSocket(wsUrl(since, since === undefined || epoch === null ? undefined : epoch), { headers: { cookie: tech.cookie, origin: srv.url } });
  const messages: StreamMessage[] = [];
  ws.on('message', (d) => messages.push(StreamMessageSchema.parse(JSON.parse(String(d)))));
  const opened = new Promise<void>((resolve, reject) => {
    ws.once('open', () => resolve());
    ws.once('error', reject);
  });
  return { ws, messages, opened };
}

async function until(cond: () => boolean, ms = 10_000): Promise<void> {
  const end = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > end) throw new Error('condition not met in time');
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('stream: authentication and origin on upgrade', () => {
  it('refuses an upgrade without a session with 401', async () => {
    expect(await tryOpen({ origin: srv.url })).toEqual({ opened: false, status: 401 });
  });

  it('refuses an upgrade from a foreign Origin with 403, even with a valid session', async () => {
    expect(await tryOpen({ origin: 'http://evil.example', cookie: tech.cookie })).toEqual({ opened: false, status: 403 });
  });

  it('accepts a signed-in client from our own origin', async () => {
    expect(await tryOpen({ origin: srv.url, cookie: tech.cookie })).toEqual({ opened: true });
  });
});

describe('stream: resume by sequence number', () => {
  it('a killed client that resumes with since sees every sequence number exactly once', async () => {
    const a = collect();
    await a.opened;
    await until(() => a.messages.filter((m) => m.type === 'sample.received').length >= 20);
    // Kill the client without a close handshake, as a dropped connection would.
    a.ws.terminate();
    const firstSeqs = a.messages.filter((m) => m.type !== 'stream.opened').map((m) => m.seq);
    const last = Math.max(...firstSeqs);
    // Let the bench move on while the client is gone.
    const before = srv.bench.hub.latestSeq;
    await until(() => srv.bench.hub.latestSeq >= before + 20);
    const b = collect(last);
    await b.opened;
    const target = srv.bench.hub.latestSeq + 10;
    await until(() => b.messages.some((m) => m.seq >= target));
    b.ws.terminate();
    const opened = b.messages[0]!;
    expect(opened.type).toBe('stream.opened');
    expect(opened).toMatchObject({ seq: last, epoch: srv.bench.epoch });
    expect(b.messages.some((m) => m.type === 'stream.reset')).toBe(false);
    const all = [...firstSeqs, ...b.messages.filter((m) => m.type !== 'stream.opened').map((m) => m.seq)];
    const first = firstSeqs[0]!;
    const end = Math.max(...all);
    // Every seq from the first seen to the last seen, exactly once, with nothing missing across the gap.
    expect(new Set(all).size).toBe(all.length);
    expect(all.length).toBe(end - first + 1);
    expect(all).toEqual(Array.from({ length: end - first + 1 }, (_, i) => first + i));
  });

  it('replays a few thousand messages in pages, in order, without a gap, then goes on live', async () => {
    const latest = srv.bench.latestSeq();
    const since = Math.max(0, latest - 3000);
    const c = collect(since);
    await c.opened;
    // Paced replay (replay-pacer.ts) on a busy machine: a longer wait than the live checks.
    await until(() => c.messages.some((m) => m.seq >= latest + 5), 30_000);
    c.ws.terminate();
    expect(c.messages[0]).toMatchObject({ type: 'stream.opened', seq: since, epoch: srv.bench.epoch });
    const seqs = c.messages.slice(1).map((m) => m.seq);
    expect(c.messages.some((m) => m.type === 'stream.reset')).toBe(false);
    expect(seqs).toEqual(Array.from({ length: seqs.length }, (_, i) => since + 1 + i));
  });
});

describe('stream: reset instead of a resume that cannot be trusted', () => {
  async function firstTwo(since: number, epoch: string | null) {
    const c = collect(since, epoch);
    await c.opened;
    await until(() => c.messages.length >= 2);
    c.ws.terminate();
    return c.messages;
  }

  it('a resume from another epoch (the server restarted) gets stream.reset and goes on live', async () => {
    const [opened, reset] = await firstTwo(5, 'an-older-epoch');
    expect(opened).toMatchObject({ type: 'stream.opened', epoch: srv.bench.epoch });
    expect(reset).toMatchObject({ type: 'stream.reset', reason: 'epoch', fromSeq: 5, epoch: srv.bench.epoch });
    expect(reset!.seq).toBeGreaterThanOrEqual(opened!.seq);
  });

  it('a resume that names no epoch is treated as another epoch', async () => {
    const [, reset] = await firstTwo(5, null);
    expect(reset).toMatchObject({ type: 'stream.reset', reason: 'epoch' });
  });

  it('a resume from further back than one replay serves (20 000 messages) gets stream.reset', async () => {
    const since = srv.bench.latestSeq();
    // More than a replay's worth after `since`, numbered at once.
    for (let i = 0; i < 20_001; i++) srv.bench.hub.ingestSample({ benchId: 'bench-test', device: 'pressure', raw: `DP ${i}`, value: i, unit: 'kPa' });
    const [opened, reset] = await firstTwo(since, srv.bench.epoch);
    expect(reset).toMatchObject({ type: 'stream.reset', reason: 'behind', fromSeq: since });
    expect(opened!.seq).toBeGreaterThanOrEqual(since + 20_001);
  });

  it('a since beyond the latest seq gets stream.reset (not silence)', async () => {
    const ahead = srv.bench.latestSeq() + 1_000_000;
    const [opened, reset] = await firstTwo(ahead, srv.bench.epoch);
    expect(reset).toMatchObject({ type: 'stream.reset', reason: 'ahead', fromSeq: ahead });
    expect(reset!.seq).toBeLessThan(ahead);
    expect(opened!.seq).toBe(reset!.seq);
  });
});
