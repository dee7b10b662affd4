/**
 * Bench identity and server time (issue 11, findings 2 and 6; acceptance 2 and 3): who may feed
 * which bench over `/ws`, whose clock times a hold, and how many benches forwarded names can make.
 * Real server, real WebSocket clients, HOLD_SECONDS = 5.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import WebSocket from 'ws';
import { RunSchema, type Run } from '../../shared/schemas/runs';
import type { ClientMessage, StreamMessage } from '../../shared/schemas/stream';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { prepareJob, until } from './runs-helpers';

type Acked = Extract<StreamMessage, { type: 'lines.acked' }>;
type Line = { device: 'pressure' | 'current'; raw: string; wallMs: number };

let srv: TestServer;
let techA: ApiClient;
let techB: ApiClient;
let lead: ApiClient;
let admin: ApiClient;
let aId: string;
let jobId: string;

beforeAll(async () => {
  srv = await startTestServer({ env: { HOLD_SECONDS: '5' } });
  techA = new ApiClient(srv.url);
  techB = new ApiClient(srv.url);
  lead = new ApiClient(srv.url);
  admin = new ApiClient(srv.url);
  await Promise.all([techA.login(demoEmail('tech')), techB.login(demoEmail('tech2')), lead.login(demoEmail('lead')), admin.login(demoEmail('admin'))]);
  aId = (await techA.get('/api/auth/me')).body.id;
  jobId = await prepareJob(srv, lead);
}, 300_000);
afterAll(async () => {
  await srv?.close();
});

/** A forwarding client on `/ws` (cookie or Bearer token) that numbers its batches and records acknowledgements. */
function sender(headers: Record<string, string>, senderId = `t-${Math.random().toString(36).slice(2, 10)}`) {
  const ws = new WebSocket(`${srv.url.replace('http', 'ws')}/ws`, { headers: { origin: srv.url, ...headers } });
  const acks: Acked[] = [];
  const state: { closed?: { code: number; reason: string }; status?: number } = {};
  ws.on('message', (d) => {
    const m = JSON.parse(String(d)) as StreamMessage;
    if (m.type === 'lines.acked') acks.push(m);
  });
  ws.on('close', (code, reason) => (state.closed = { code, reason: String(reason) }));
  ws.on('unexpected-response', (_req, res) => {
    state.status = res.statusCode;
    res.resume();
  });
  ws.on('error', () => {});
  const opened = new Promise<boolean>((resolve) => {
    ws.once('open', () => resolve(true));
    ws.once('close', () => resolve(false));
    ws.once('unexpected-response', () => resolve(false));
  });
  let seq = 0;
  return {
    ws,
    acks,
    state,
    opened,
    senderId,
    send(benchId: string, lines: Line[], o: { sentWallMs?: number; batchSeq?: number } = {}): number {
      const batchSeq = o.batchSeq ?? ++seq;
      const m: ClientMessage = { type: 'lines.forwarded', benchId, senderId, batchSeq, sentWallMs: o.sentWallMs ?? Date.now(), lines };
      ws.send(JSON.stringify(m));
      return batchSeq;
    },
    async ack(batchSeq: number): Promise<Acked> {
      await until(() => acks.some((a) => a.batchSeq === batchSeq), 30_000, `ack of batch ${batchSeq}`);
      return acks.find((a) => a.batchSeq === batchSeq)!;
    },
    close: () => ws.terminate(),
  };
}

const dp = (v: number, wallMs: number): Line => ({ device: 'pressure', raw: `DP ${v.toFixed(4)} inH2O@68F`, wallMs });
const ma = (v: number, wallMs: number): Line => ({ device: 'current', raw: `${(v / 1000).toExponential(6).replace('e-', 'E-0')}`, wallMs });
/** Readings of the mode check's point (25 % DP of 0–100 inH2O, about 12 mA with the root in the transmitter). */
const atPoint = (wallMs: number, k: number): Line[] => [dp(25 + ((k % 3) - 1) * 0.002, wallMs), ma(12 + ((k % 3) - 1) * 0.0005, wallMs)];

const getRun = async (id: string): Promise<Run> => RunSchema.parse((await techA.get(`/api/runs/${id}`)).body);
async function startModeCheck(benchId: string): Promise<Run> {
  const r = await techA.post(`/api/jobs/${jobId}/runs`, { kind: 'mode-check', benchId });
  expect(r.status, JSON.stringify(r.body)).toBe(201);
  return RunSchema.parse(r.body);
}
async function abort(run: Run): Promise<void> {
  const r = await techA.post(`/api/runs/${run.id}/abort`);
  expect([200, 409]).toContain(r.status);
}
async function storedRaws(benchId: string): Promise<string[]> {
  await srv.bench.writer.flush();
  return (await srv.bench.samplesAfter(0, 100_000, benchId)).map((r) => r.raw);
}

describe('who may feed a bench', () => {
  it("refuses technician B's lines for technician A's run, stores none of them and captures nothing (finding 2)", async () => {
    const benchA = `browser-${aId}`;
    const run = await startModeCheck(benchA);
    const b = sender({ cookie: techB.cookie });
    expect(await b.opened).toBe(true);
    // B's forged hold: below the window, then 6 s of steady readings stamped into one batch.
    const t0 = Date.now();
    const lines: Line[] = [dp(20, t0 - 7000), ma(10.4, t0 - 7000)];
    for (let k = 0; k < 60; k++) lines.push(...atPoint(t0 - 6000 + k * 100, k));
    for (const bench of [benchA, 'bench-1']) {
      const ack = await b.ack(b.send(bench, lines, { sentWallMs: t0 }));
      expect(ack.status, bench).toBe('refused');
      expect(ack.stored).toBe(0);
    }
    // Nothing of B's is stored on either bench, and the point is not captured.
    expect((await storedRaws(benchA)).length).toBe(0);
    expect((await storedRaws('bench-1')).filter((r) => r === lines[2]!.raw)).toEqual([]);
    const after = await getRun(run.id);
    expect(after.points[0]!.state).not.toBe('captured');
    b.close();
    await abort(run);
  });

  it('refuses a run on a bench nobody may feed: not registered, or another technician\u2019s browser bench', async () => {
    const r1 = await techA.post(`/api/jobs/${jobId}/runs`, { kind: 'mode-check', benchId: 'bench-made-up' });
    expect(r1.status).toBe(400);
    expect(r1.body.error.fields.benchId).toBeTruthy();
    const bId = (await techB.get('/api/auth/me')).body.id as string;
    expect((await techA.post(`/api/jobs/${jobId}/runs`, { kind: 'mode-check', benchId: `browser-${bId}` })).status).toBe(400);
  });

  it('refuses lines from a signed-out sender and from a deactivated one, and closes their sockets', async () => {
    const c = new ApiClient(srv.url);
    await c.login(demoEmail('tech2'));
    const me = (await c.get('/api/auth/me')).body.id as string;
    const s = sender({ cookie: c.cookie });
    expect(await s.opened).toBe(true);
    const ok = await s.ack(s.send(`browser-${me}`, [ma(4, Date.now())]));
    expect(ok.status).toBe('stored');
    await c.post('/api/auth/logout');
    // Sign-out closes the sender's socket at once (sockets follow the session: stream-session.test.ts);
    // a batch sent after it is never taken.
    await until(() => !!s.state.closed, 5000, 'socket closed');
    s.send(`browser-${me}`, [ma(4.1, Date.now())]);
    expect((await storedRaws(`browser-${me}`)).length).toBe(1);

    // Deactivated: an admin switches the account off while its socket is open.
    const invited = await admin.post('/api/users', { email: 'fwd-off@stillpoint-demo.test', name: 'Fwd Off', role: 'technician', password: 'violet-harbour-71x' });
    expect(invited.status).toBe(201);
    // Invited users must choose a new password first (accounts.test.ts); taken as done here.
    await srv.database.exec(`UPDATE users SET must_change_password = false WHERE email = 'fwd-off@stillpoint-demo.test'`);
    const d = new ApiClient(srv.url);
    await d.login('fwd-off@stillpoint-demo.test', 'violet-harbour-71x');
    const ds = sender({ cookie: d.cookie });
    expect(await ds.opened).toBe(true);
    expect((await ds.ack(ds.send(`browser-${invited.body.id}`, [ma(4, Date.now())]))).status).toBe('stored');
    expect((await admin.req('PATCH', `/api/users/${invited.body.id}`, { active: false })).status).toBe(200);
    await until(() => !!ds.state.closed, 5000, 'socket closed');
    ds.send(`browser-${invited.body.id}`, [ma(4.2, Date.now())]);
    expect((await storedRaws(`browser-${invited.body.id}`)).length).toBe(1);
  });

  it('bounds the benches: 2 020 forwarded bench names create none (finding 6)', async () => {
    const before = srv.bench.status().benches.length;
    const s = sender({ cookie: techA.cookie });
    expect(await s.opened).toBe(true);
    // Sent as a forwarder sends: a window of batches at a time (the server closes a sender that floods it, 1013).
    for (let i = 0; i < 2020; i += 32) {
      let last = 0;
      for (let k = i; k < Math.min(i + 32, 2020); k++) last = s.send(`fwd-${k}`, [ma(4, Date.now())]);
      expect((await s.ack(last)).status).toBe('refused');
    }
    expect(s.acks.length).toBe(2020);
    expect(s.acks.every((a) => a.status === 'refused')).toBe(true);
    expect(s.state.closed).toBeUndefined();
    expect(srv.bench.status().benches.length).toBe(before);
    s.close();
  });

  it('lets a lead or an admin register an agent bench whose token feeds only that bench, until revoked', async () => {
    expect((await techA.post('/api/benches', { id: 'agent-idt', label: 'Workshop bench 2' })).status).toBe(403);
    expect((await lead.post('/api/benches', { id: 'Bad Name!', label: 'x' })).status).toBe(400);
    expect((await lead.post('/api/benches', { id: 'bench-1', label: 'x' })).status).toBe(400);
    const reg = await lead.post('/api/benches', { id: 'agent-idt', label: 'Workshop bench 2' });
    expect(reg.status).toBe(201);
    const token = reg.body.token as string;
    expect(token).toMatch(/^spb_/);
    expect((await lead.post('/api/benches', { id: 'agent-idt', label: 'again' })).status).toBe(409);
    // The token is shown once: the list never carries it, nor its hash.
    const list = await techA.get('/api/benches');
    expect(list.status).toBe(200);
    expect(JSON.stringify(list.body)).not.toContain(token);
    expect(JSON.stringify(list.body)).not.toContain(token.slice(10));
    expect(list.body.items.find((b: { id: string }) => b.id === 'agent-idt').active).toBe(true);
    expect(list.body.browserBenchId).toBe(`browser-${aId}`);

    const bad = sender({ authorization: 'Bearer spb_not-a-token' });
    expect(await bad.opened).toBe(false);
    expect(bad.state.status).toBe(401);

    const agent = sender({ authorization: `Bearer ${token}` });
    expect(await agent.opened).toBe(true);
    expect((await agent.ack(agent.send('agent-idt', [ma(12, Date.now()), dp(25, Date.now())]))).status).toBe('stored');
    expect((await agent.ack(agent.send('bench-1', [ma(12, Date.now())]))).status).toBe('refused');
    await srv.bench.writer.flush();
    const rows = await srv.bench.samplesAfter(0, 100, 'agent-idt');
    expect(rows.map((r) => r.raw)).toEqual([ma(12, 0).raw, dp(25, 0).raw]);

    // A run on the agent's bench takes the agent's lines; the capture names them as its source.
    const run = await startModeCheck('agent-idt');
    const t0 = Date.now();
    expect((await agent.ack(agent.send('agent-idt', [dp(20, t0), ma(10.4, t0)]))).status).toBe('stored');
    let k = 0;
    const feed = setInterval(() => agent.send('agent-idt', atPoint(Date.now(), k++)), 100);
    try {
      await until(async () => (await getRun(run.id)).points[0]!.state === 'captured', 20_000, 'captured from the agent');
    } finally {
      clearInterval(feed);
    }
    const done = await getRun(run.id);
    expect(done.points[0]!.capture!.capturedFrom).toBe('agent:agent-idt');
    await srv.runs.settle();
    const audit = await lead.get(`/api/audit?entity=run&entityId=${run.id}`);
    const captured = (audit.body.items as { action: string; after: { capture: { capturedFrom: string } } }[]).find((e) => e.action === 'run.point-captured');
    expect(captured?.after.capture.capturedFrom).toBe('agent:agent-idt');

    // Revoked: the open socket is closed, the token no longer opens one.
    const revoked = await admin.post('/api/benches/agent-idt/revoke');
    expect(revoked.status).toBe(200);
    expect(revoked.body.active).toBe(false);
    await until(() => !!agent.state.closed, 5000, 'agent socket closed');
    expect(agent.state.closed!.code).toBe(4403);
    const again = sender({ authorization: `Bearer ${token}` });
    expect(await again.opened).toBe(false);
    expect(again.state.status).toBe(401);
  }, 120_000);

  it('stores a resent batch once and acknowledges it as a duplicate', async () => {
    const s = sender({ cookie: techA.cookie });
    expect(await s.opened).toBe(true);
    const bench = `browser-${aId}`;
    const before = (await storedRaws(bench)).length;
    const lines = [ma(5.5, Date.now()), ma(5.6, Date.now())];
    const n = s.send(bench, lines);
    expect((await s.ack(n)).status).toBe('stored');
    s.acks.length = 0;
    s.send(bench, lines, { batchSeq: n });
    expect((await s.ack(n)).status).toBe('duplicate');
    expect((await storedRaws(bench)).length).toBe(before + 2);
    s.close();
  });
});

describe('server time decides (acceptance 3)', () => {
  async function heldFor(runId: string): Promise<Run['points'][number]> {
    await until(async () => (await getRun(runId)).points[0]!.state === 'captured', 30_000, 'captured');
    return (await getRun(runId)).points[0]!;
  }

  it('a sender clock 2.8 h ahead captures only after the hold has elapsed on the server, and is flagged on the run', async () => {
    const bench = `browser-${aId}`;
    const run = await startModeCheck(bench);
    const s = sender({ cookie: techA.cookie });
    expect(await s.opened).toBe(true);
    const ahead = 2.8 * 3600_000;
    // Readings stamped 2.8 h ahead; the batch claims a 6 s hold already happened.
    const t0 = Date.now() + ahead;
    const first: Line[] = [dp(20, t0 - 7000), ma(10.4, t0 - 7000)];
    for (let k = 0; k < 60; k++) first.push(...atPoint(t0 - 6000 + k * 100, k));
    const start = performance.now();
    expect((await s.ack(s.send(bench, first, { sentWallMs: t0 }))).status).toBe('stored');
    let k = 0;
    const feed = setInterval(() => s.send(bench, atPoint(Date.now() + ahead, k++), { sentWallMs: Date.now() + ahead }), 100);
    try {
      await until(() => performance.now() - start > 1500, 5000, 'a moment');
      expect((await getRun(run.id)).points[0]!.state).not.toBe('captured');
      const p = await heldFor(run.id);
      // The hold window on the server's clock is at least the hold time (5 s).
      expect(p.capture!.endMs - p.capture!.startMs).toBeGreaterThanOrEqual(5000 - 150);
      expect(performance.now() - start).toBeGreaterThanOrEqual(5000);
      expect(p.capture!.capturedFrom).toBe(`browser:${aId}`);
    } finally {
      clearInterval(feed);
      s.close();
    }
    await srv.runs.settle();
    const audit = await lead.get(`/api/audit?entity=run&entityId=${run.id}`);
    const flagged = (audit.body.items as { action: string; after: { message: string } }[]).filter((e) => e.action === 'run.clock-flagged');
    expect(flagged.length).toBeGreaterThanOrEqual(1);
    expect(flagged[0]!.after.message).toMatch(/2\.8 h ahead/);
  }, 120_000);

  it('timestamps compressing 5 s into 1 s do not capture before the server-clock hold, and the rate is flagged', async () => {
    const bench = `browser-${aId}`;
    const run = await startModeCheck(bench);
    const s = sender({ cookie: techA.cookie });
    expect(await s.opened).toBe(true);
    const base = Date.now();
    const start = performance.now();
    // Each 100 ms of real time claims 500 ms: the sender's clock runs five times fast.
    const claimed = () => base + (performance.now() - start) * 5;
    expect((await s.ack(s.send(bench, [dp(20, claimed()), ma(10.4, claimed())], { sentWallMs: claimed() }))).status).toBe('stored');
    let k = 0;
    const feed = setInterval(() => {
      const now = claimed();
      s.send(bench, [...atPoint(now - 400, k), ...atPoint(now - 200, k + 1), ...atPoint(now, k + 2)], { sentWallMs: now });
      k += 3;
    }, 100);
    try {
      await until(() => performance.now() - start > 1200, 5000, 'one real second');
      // 6 s by the sender's clock have passed; the hold is not captured.
      expect((await getRun(run.id)).points[0]!.state).not.toBe('captured');
      const p = await heldFor(run.id);
      expect(p.capture!.endMs - p.capture!.startMs).toBeGreaterThanOrEqual(5000 - 150);
      expect(performance.now() - start).toBeGreaterThanOrEqual(5000);
    } finally {
      clearInterval(feed);
      s.close();
    }
    await srv.runs.settle();
    const audit = await lead.get(`/api/audit?entity=run&entityId=${run.id}`);
    const flagged = (audit.body.items as { action: string; after: { message: string } }[]).filter((e) => e.action === 'run.clock-flagged');
    expect(flagged.map((f) => f.after.message).join('\n')).toMatch(/clock ran/);
  }, 120_000);
});
