/**
 * The stream across crashes (issue 11, finding 7): the real server process, with the sim
 * autopilot driving a capture, is killed with SIGKILL `kills` times and started again on the same
 * data directory. A viewer records every (epoch, seq, message) it sees, resumes with its last seq
 * and epoch once within each epoch (which must be served without a reset) and after every restart
 * (which must be answered with `stream.reset`, reason `epoch`); after each restart it also
 * re-reads the stored samples over HTTP from a little before the last seq it saw, and resumes in
 * the new epoch from there. Nothing here asserts: it returns
 * what it saw, and the caller (tests/proof/stream-epochs.test.ts: 20 kills, 3 in the short pass
 * of `npm test`) checks that no seq ever named two different messages.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import WebSocket from 'ws';
import type { StreamMessage } from '../../shared/schemas/stream';
import { prepareFt101, sleep } from './proof-helpers';
import { randomPort, startServerProcess, waitHealthy, type ServerProcess } from './proof-process';
import { ApiClient, demoEmail } from './test-server';
import { seededRng } from '../../shared/random';

/** What a message says, without its seq: the same seq must always say the same. */
function identity(m: StreamMessage): string {
  if (m.type === 'sample.received') return `sample|${m.benchId}|${m.device}|${m.wallMs}|${m.raw}`;
  const { seq: _seq, ...rest } = m;
  return JSON.stringify(rest);
}

/** One seq seen naming two different messages. */
export interface SeqClash {
  seq: number;
  first: { epoch: string; what: string };
  then: { epoch: string; what: string };
}

export interface EpochsOutcome {
  kills: number;
  epochs: string[];
  /** Distinct seqs seen, and (epoch, seq) sightings in all. */
  seqsSeen: number;
  sightings: number;
  clashes: SeqClash[];
  /** Resumes after a restart, and how each was answered (`stream.reset` reasons, or what came instead). */
  restartAnswers: string[];
  /** Resumes within an epoch answered with a reset (should be none). */
  resetsWithinEpoch: number;
  /** Resumes in a new epoch from before its start that were answered with a reset (more than one replay back). */
  deepResets: number;
  /** The first seq of each epoch was above every seq seen before it. */
  numberingRose: boolean;
  minutes: number;
}

type Ended = { code: number };

/** A viewer socket feeding one record of every message. */
function openViewer(base: string, cookie: string, resume: { since: number; epoch: string } | undefined, onMessage: (m: StreamMessage) => void) {
  const q = resume ? `?since=${resume.since}&epoch=${encodeURIComponent(resume.epoch)}` : '';
  const ws = new WebSocket(`${base.replace('http', 'ws')}/ws${q}`, { headers: { cookie, origin: base } });
  const first: StreamMessage[] = [];
  ws.on('message', (d) => {
    const m = JSON.parse(String(d)) as StreamMessage;
    if (first.length < 2) first.push(m);
    onMessage(m);
  });
  ws.on('error', () => {});
  const ended = new Promise<Ended>((resolve) => ws.once('close', (code) => resolve({ code })));
  const opened = new Promise<void>((resolve, reject) => {
    ws.once('message', () => resolve());
    ws.once('unexpected-response', (_q, res) => reject(new Error(`ws refused: ${res.statusCode}`)));
  });
  return { ws, first, opened, ended };
}

/** Runs the kill-and-resume rounds; `seed` sets the kill moments. */
export async function killAndResume(o: { kills: number; seed: number; log?: (line: string) => void }): Promise<EpochsOutcome> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-epochs-'));
  const children: ServerProcess[] = [];
  const random = seededRng(o.seed);
  const t0 = Date.now();
  const seen = new Map<number, { epoch: string; what: string }>();
  const clashes: SeqClash[] = [];
  const epochs: string[] = [];
  const restartAnswers: string[] = [];
  let sightings = 0;
  let resetsWithinEpoch = 0;
  let deepResets = 0;
  let numberingRose = true;
  let last: { since: number; epoch: string } | undefined;
  let maxSeen = 0;
  /** Every seq of a new epoch must be above `floor`, the highest seen before it started. */
  let floor = { epoch: '', seq: 0, pending: false };
  /** Records a message; `side` messages (a second look) leave the viewer's resume point alone. */
  const record = (m: StreamMessage, side?: { epoch: string }) => {
    if (side) {
      if (m.type === 'stream.opened' || m.type === 'stream.reset') return;
      sightings++;
      const what = identity(m);
      const before = seen.get(m.seq);
      if (!before) seen.set(m.seq, { epoch: side.epoch, what });
      else if (before.what !== what) clashes.push({ seq: m.seq, first: before, then: { epoch: side.epoch, what } });
      return;
    }
    if (m.type === 'stream.opened' || m.type === 'stream.reset') {
      last = { since: m.seq, epoch: m.epoch };
      if (floor.pending) floor = { epoch: m.epoch, seq: floor.seq, pending: false };
      return;
    }
    const epoch = last?.epoch ?? '?';
    if (epoch === floor.epoch && m.seq <= floor.seq) numberingRose = false;
    sightings++;
    const what = identity(m);
    const before = seen.get(m.seq);
    if (!before) seen.set(m.seq, { epoch, what });
    else if (before.what !== what) clashes.push({ seq: m.seq, first: before, then: { epoch, what } });
    if (last && m.seq > last.since) last = { since: m.seq, epoch: last.epoch };
    maxSeen = Math.max(maxSeen, m.seq);
  };

  let tech = '';
  let admin = '';
  let jobId = '';
  try {
    for (let round = 0; round <= o.kills; round++) {
      const s = await startServerProcess({ dataDir: dir, port: await randomPort() });
      children.push(s);
      // Generous: on a shared two-core machine a boot has taken over 90 s.
      await waitHealthy(s, 600_000);
      const t = new ApiClient(s.base);
      const ad = new ApiClient(s.base);
      t.cookie = tech;
      ad.cookie = admin;
      if (!tech) {
        await t.login(demoEmail('tech'));
        await ad.login(demoEmail('admin'));
        tech = t.cookie;
        admin = ad.cookie;
        jobId = await prepareFt101(t);
      }
      floor = { epoch: '', seq: maxSeen, pending: round > 0 };

      // Resume across the restart: the old epoch is gone, so the answer must be a reset.
      const v = openViewer(s.base, tech, last, record);
      await v.opened;
      for (let i = 0; i < 100 && v.first.length < (last ? 2 : 1); i++) await sleep(20);
      const opened = v.first[0];
      if (opened?.type !== 'stream.opened') throw new Error(`round ${round}: first message ${JSON.stringify(opened)}`);
      epochs.push(opened.epoch);
      if (round > 0) {
        const answer = v.first[1];
        restartAnswers.push(answer?.type === 'stream.reset' ? `reset:${answer.reason}` : (answer?.type ?? 'nothing'));
        // After the reset the client re-reads over HTTP: the stored samples from a little before the
        // last seq it saw must say what the stream said for every seq it had seen.
        const back = Math.max(0, floor.seq - 2000);
        let after = back;
        for (let page = 0; page < 4; page++) {
          const items = (await t.get(`/api/bench/samples?after=${after}&limit=5000`)).body.items as { seq: number; benchId: string; device: 'pressure' | 'current'; wallMs: number; raw: string }[];
          for (const r of items) record({ type: 'sample.received', seq: r.seq, benchId: r.benchId, device: r.device, wallMs: r.wallMs, raw: r.raw, value: null, unit: null, runId: null }, { epoch: `${opened.epoch}/http` });
          if (items.length < 5000) break;
          after = items[items.length - 1]!.seq;
        }
        // And a resume in the new epoch from there (served if within one replay, else reset): the same holds.
        const latestNow = ((await t.get('/api/bench')).body as { latestSeq: number }).latestSeq;
        let caughtUp = false;
        const deep = openViewer(s.base, tech, { since: back, epoch: opened.epoch }, (m) => {
          if (m.type === 'stream.reset' || (m.type !== 'stream.opened' && m.seq >= latestNow)) caughtUp = true;
          record(m, { epoch: `${opened.epoch}/resume` });
        });
        await deep.opened;
        for (let i = 0; i < 500 && !caughtUp; i++) await sleep(20);
        if (deep.first[1]?.type === 'stream.reset') deepResets++;
        deep.ws.terminate();
      }
      if (round === o.kills) {
        v.ws.terminate();
        s.child.kill('SIGTERM');
        await s.exited;
        break;
      }

      // A capture under the autopilot (a run restored after the kill is aborted first).
      const status = (await t.get('/api/bench')).body as { benches: { activeRunId: string | null }[] };
      for (const b of status.benches) if (b.activeRunId) await t.post(`/api/runs/${b.activeRunId}/abort`);
      const run = await t.post(`/api/jobs/${jobId}/runs`, { kind: 'as-found' });
      if (run.status !== 201) throw new Error(`round ${round}: start run ${run.status} ${JSON.stringify(run.body)}`);
      const sim = await ad.post('/api/sim', { autopilot: { speed: 6, holdSeconds: 1.8 } });
      if (sim.status !== 200) throw new Error(`round ${round}: autopilot ${sim.status} ${JSON.stringify(sim.body)}`);

      // Drop the viewer once and resume within the epoch: served, without a reset.
      await sleep(300 + random() * 1200);
      v.ws.terminate();
      await v.ended;
      const again = openViewer(s.base, tech, last, record);
      await again.opened;
      for (let i = 0; i < 100 && again.first.length < 2; i++) await sleep(20);
      if (again.first.some((m) => m.type === 'stream.reset')) resetsWithinEpoch++;

      // Kill at a random moment while samples and run events flow.
      await sleep(500 + random() * 2500);
      s.child.kill('SIGKILL');
      await s.exited;
      await again.ended;
      o.log?.(`stream epochs: round ${round + 1}/${o.kills}, ${seen.size} seqs seen, ${clashes.length} clashes`);
    }
  } finally {
    for (const c of children) if (c.child.exitCode === null && c.child.signalCode === null) c.child.kill('SIGKILL');
    await Promise.all(children.map((c) => c.exited));
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return {
    kills: o.kills,
    epochs,
    seqsSeen: seen.size,
    sightings,
    clashes,
    restartAnswers,
    resetsWithinEpoch,
    deepResets,
    numberingRose,
    minutes: Number(((Date.now() - t0) / 60_000).toFixed(1)),
  };
}
