/**
 * The WebSocket stream on the booted app: refused without a session or from another site;
 * a client killed mid-stream that resumes with `since` sees every sequence number exactly once.
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
});
afterAll(async () => {
  await srv?.close();
});

const wsUrl = (since?: number) => `${srv.url.replace('http', 'ws')}/ws${since === undefined ? '' : `?since=${since}`}`;

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
function collect(since?: number) {
  const ws = new WebSocket(wsUrl(since), { headers: { cookie: tech.cookie, origin: srv.url } });
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
    expect(b.messages.some((m) => m.type === 'stream.resynced')).toBe(false);
    const all = [...firstSeqs, ...b.messages.filter((m) => m.type !== 'stream.opened').map((m) => m.seq)];
    const first = firstSeqs[0]!;
    const end = Math.max(...all);
    // Every seq from the first seen to the last seen, exactly once, with nothing missing across the gap.
    expect(new Set(all).size).toBe(all.length);
    expect(all.length).toBe(end - first + 1);
    expect(all).toEqual(Array.from({ length: end - first + 1 }, (_, i) => first + i));
  });

  it('resumes from stored samples when the ring no longer holds them, or says resynced', async () => {
    // seq 0 is older than anything: the server answers from storage without a gap or with stream.resynced.
    const c = collect(0);
    await c.opened;
    await until(() => c.messages.length > 5);
    c.ws.terminate();
    expect(c.messages[0]!.type).toBe('stream.opened');
    const seqs = c.messages.slice(1).filter((m) => m.type !== 'stream.resynced').map((m) => m.seq);
    for (let i = 1; i < seqs.length; i++) expect(seqs[i]!).toBeGreaterThan(seqs[i - 1]!);
  });
});
