/** Helpers shared by the run and bench integration tests (not a test file). */
import WebSocket from 'ws';
import { StreamMessageSchema, type StreamMessage } from '../../shared/schemas/stream';
import { ApiClient, demoEmail, type TestServer } from '../helpers/test-server';
import { useTestServer } from '../helpers/use-test-server';

export async function until(cond: () => boolean | Promise<boolean>, ms = 30_000, what = 'condition'): Promise<void> {
  const end = Date.now() + ms;
  while (!(await cond())) {
    if (Date.now() > end) throw new Error(`${what}: not met within ${ms} ms`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

/** A WebSocket client that records every stream message. */
export function streamClient(srv: { url: string }, client: ApiClient, since?: number) {
  const url = `${srv.url.replace('http', 'ws')}/ws${since === undefined ? '' : `?since=${since}`}`;
  const ws = new WebSocket(url, { headers: { cookie: client.cookie, origin: srv.url } });
  const messages: StreamMessage[] = [];
  ws.on('message', (d) => messages.push(StreamMessageSchema.parse(JSON.parse(String(d)))));
  const opened = new Promise<void>((resolve, reject) => {
    ws.once('open', () => resolve());
    ws.once('error', reject);
  });
  return { ws, messages, opened, close: () => ws.terminate() };
}

/**
 * Readies the tech's FT-101 job (0–100 inH2O@68F, root in the transmitter, clamp cutoff) for a run:
 * in-date standards chosen and every preparation step signed, written straight to the database.
 */
export async function prepareJob(srv: TestServer, lead: ApiClient, tag = 'FT-101'): Promise<string> {
  const jobs = (await lead.get('/api/jobs')).body.items as { id: string; tag: string }[];
  const job = jobs.find((j) => j.tag === tag)!;
  const std = (await lead.get('/api/standards?pageSize=50')).body.items as { id: string; serial: string }[];
  const ids = std.filter((s) => s.serial === 'QDU-PC-0417' || s.serial === 'QDU-MM-0031').map((s) => s.id);
  const step = { by: '00000000-0000-4000-8000-000000000001', byName: 'Test', at: new Date().toISOString() };
  const checklist = {
    standardIds: ids,
    permitNo: 'PTW-TEST-1',
    bypass: { required: false, description: '', recorded: null, removed: null },
    operatorsInformed: step,
    isolated: step,
    vented: step,
    flushed: step,
    returnedToService: null,
  };
  await srv.database.exec(`UPDATE jobs SET checklist = '${JSON.stringify(checklist)}'::jsonb, permit_no = 'PTW-TEST-1' WHERE id = '${job.id}'`);
  return job.id;
}

/**
 * Boots the app (simulated rig, HOLD_SECONDS = 2 unless `holdSeconds` says otherwise) before the
 * calling file's tests with the technician and the admin signed in and the tech's FT-101 job ready
 * (the lead prepares it); closes it after them.
 */
export function useRunJob(holdSeconds = 2) {
  return useTestServer(
    async (srv) => {
      const tech = new ApiClient(srv.url);
      const admin = new ApiClient(srv.url);
      const lead = new ApiClient(srv.url);
      await Promise.all([tech.login(demoEmail('tech')), admin.login(demoEmail('admin')), lead.login(demoEmail('lead'))]);
      return { tech, admin, jobId: await prepareJob(srv, lead) };
    },
    { env: { HOLD_SECONDS: String(holdSeconds) }, timeoutMs: 180_000 },
  );
}
