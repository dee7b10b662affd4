/**
 * Shared pieces of the proof suites (tests/proof): the live route table, one signed-in client per
 * role, row counts of every data table, a raw HTTP client that sends exactly the bytes and path it
 * is given, the error-body contract, and the summary file the README's Reliability section quotes.
 */
import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { expect } from 'vitest';
import { ERROR_CODES } from '../../shared/schemas/errors';
import type { RouteSpec } from '../../server/http/route-table';
import { allows, type Action } from '../../server/http/policy';
import type { Role } from '../../shared/schemas/auth';
import { ApiClient, demoEmail, type TestServer } from './test-server';

export const ROLES: readonly Role[] = ['technician', 'lead', 'admin', 'auditor'];
export const LOGIN_OF: Record<Role, 'tech' | 'lead' | 'admin' | 'auditor'> = { technician: 'tech', lead: 'lead', admin: 'admin', auditor: 'auditor' };

/** Every mounted route with its policy action, read from the running app (new routes appear here by themselves). */
export function routesOf(srv: Pick<TestServer, 'server'>): RouteSpec[] {
  const app = srv.server.listeners('request')[0] as unknown as { locals: { routes: RouteSpec[] } };
  return app.locals.routes;
}

/** A role the policy allows for an action (the one that owns the work first), or null for a public route. */
export function roleFor(action: Action | null): Role | null {
  if (action === null) return null;
  const order: Role[] = action.startsWith('jobs.perform') ? ['technician'] : ['lead', 'admin', 'technician', 'auditor'];
  return order.find((r) => allows(action, r)) ?? ROLES.find((r) => allows(action, r)) ?? null;
}

/** Signs in one client per role (the demo users). */
export async function signInAll(base: string): Promise<Record<Role, ApiClient>> {
  const out = {} as Record<Role, ApiClient>;
  for (const r of ROLES) {
    out[r] = new ApiClient(base);
    await out[r].login(demoEmail(LOGIN_OF[r]));
  }
  return out;
}

/** Raw SQL read through the app's own database handle (tests may not import drizzle). */
export async function query<T extends Record<string, unknown>>(srv: Pick<TestServer, 'database'>, sql: string): Promise<T[]> {
  const r = (await srv.database.db.execute(sql)) as unknown as { rows: T[] };
  return r.rows;
}

/** Names of the tables in the public schema. */
export async function dataTables(srv: Pick<TestServer, 'database'>): Promise<string[]> {
  const rows = await query<{ t: string }>(srv, "select table_name as t from information_schema.tables where table_schema = 'public' and table_type = 'BASE TABLE' order by 1");
  return rows.map((r) => r.t);
}

/**
 * Audit actions that record a refused credential check: the audit of a refused request, which is
 * the point (failed sign-ins, wrong current passwords, the locks they lead to).
 */
const REFUSAL_AUDITS = ['auth.sign-in-failed', 'auth.password-change-failed', 'auth.account-locked', 'auth.reentry-locked'];

/**
 * Row count per table. The audit trail is counted without the audits of refused credential
 * checks ({@link REFUSAL_AUDITS}). Tables in `exclude` are left out.
 */
export async function rowCounts(srv: Pick<TestServer, 'database'>, tables: string[]): Promise<Record<string, number>> {
  const parts = tables.map((t) =>
    t === 'audit_events'
      ? `select '${t}' as t, count(*)::int as n from "${t}" where action not in (${REFUSAL_AUDITS.map((a) => `'${a}'`).join(', ')})`
      : `select '${t}' as t, count(*)::int as n from "${t}"`,
  );
  const rows = await query<{ t: string; n: number }>(srv, parts.join(' union all '));
  return Object.fromEntries(rows.map((r) => [r.t, Number(r.n)]));
}

/**
 * Tables the server writes on its own from shortly after boot: the simulated bench streams into
 * `samples` once its ports are open, which on a quiet machine can be after a count taken right
 * after sign-in (a clean-clone `npm test` saw `samples` still at rest for 800 ms, then growing
 * under the security suite's first tests).
 */
const ALWAYS_BUSY = ['samples'];

/**
 * Tables that change on their own while nothing is asked of the server (the bench writes samples
 * continuously; a running capture inserts and updates points): {@link ALWAYS_BUSY}, and those
 * whose counts differ when counted twice, `ms` apart.
 */
export async function busyTables(srv: Pick<TestServer, 'database'>, tables: string[], ms = 1500): Promise<string[]> {
  const a = await rowCounts(srv, tables);
  await new Promise((r) => setTimeout(r, ms));
  const b = await rowCounts(srv, tables);
  return tables.filter((t) => ALWAYS_BUSY.includes(t) || a[t] !== b[t]);
}

export interface RawResponse {
  status: number;
  headers: http.IncomingHttpHeaders;
  text: string;
  json: unknown;
}

const agent = new http.Agent({ keepAlive: true, maxSockets: 8 });

/** Sends exactly this method, path (not normalised, not re-encoded) and body. */
export function rawRequest(base: string, o: { method: string; path: string; headers?: Record<string, string>; body?: Buffer | string }): Promise<RawResponse> {
  return rawRequestOnce(base, o).catch((e: NodeJS.ErrnoException & { reusedSocket?: boolean }) => {
    // A kept-alive socket the server closed as idle just as this request went out on it: the
    // request never reached the app, so it is sent again once on a new socket (the pattern of the
    // Node.js http documentation, `request.reusedSocket`).
    if (e.reusedSocket && e.code === 'ECONNRESET') return rawRequestOnce(base, o);
    throw e;
  });
}

function rawRequestOnce(base: string, o: { method: string; path: string; headers?: Record<string, string>; body?: Buffer | string }): Promise<RawResponse> {
  const u = new URL(base);
  return new Promise((resolve, reject) => {
    const body = o.body === undefined ? undefined : Buffer.isBuffer(o.body) ? o.body : Buffer.from(o.body, 'utf8');
    const req = http.request(
      {
        host: u.hostname,
        port: u.port,
        method: o.method,
        path: o.path,
        agent,
        headers: { ...(body ? { 'content-length': String(body.length) } : {}), ...o.headers },
      },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => {
          const text = Buffer.concat(chunks).toString('utf8');
          let json: unknown;
          try {
            json = text ? JSON.parse(text) : undefined;
          } catch {
            json = undefined;
          }
          resolve({ status: res.statusCode ?? 0, headers: res.headers, text, json });
        });
        res.on('error', reject);
      },
    );
    req.on('error', (e) => reject(Object.assign(e, { reusedSocket: req.reusedSocket })));
    req.end(body);
  });
}

/** Percent-encodes every byte outside the unreserved set (lone surrogates become U+FFFD, as a browser would send them). */
export function encodeSegment(s: string): string {
  let out = '';
  for (const b of Buffer.from(s, 'utf8')) {
    const c = String.fromCharCode(b);
    out += /[A-Za-z0-9\-._~]/.test(c) ? c : `%${b.toString(16).toUpperCase().padStart(2, '0')}`;
  }
  return out;
}

/** The error contract of every route: `{ error: { code, message, fields? } }`, fields on validation failures. */
export function expectErrorBody(r: { status: number; json: unknown; text?: string }, label: string): void {
  const body = r.json as { error?: { code?: unknown; message?: unknown; fields?: unknown } } | undefined;
  expect(body?.error, `${label}: error body, got ${String(r.text ?? JSON.stringify(r.json)).slice(0, 300)}`).toBeTypeOf('object');
  expect(ERROR_CODES as readonly unknown[], `${label}: error code`).toContain(body!.error!.code);
  expect(body!.error!.message, `${label}: error message`).toBeTypeOf('string');
  if (body!.error!.code === 'validation_failed') {
    expect(body!.error!.fields, `${label}: fields`).toBeTypeOf('object');
    expect(Object.keys(body!.error!.fields as object).length, `${label}: fields`).toBeGreaterThan(0);
  }
}

/**
 * Merges figures into .tmp/proof-summary.json (the README's Reliability section quotes it). Proof
 * files run in two lanes at once, so the read-merge-write holds a lock file (exclusive create).
 */
export function recordSummary(key: string, value: Record<string, unknown>): void {
  const file = path.resolve(import.meta.dirname, '../../.tmp/proof-summary.json');
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const lock = `${file}.lock`;
  for (const until = Date.now() + 10_000; ; ) {
    try {
      fs.closeSync(fs.openSync(lock, 'wx'));
      break;
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
      // A lock older than the wait is left by a killed process: take it over.
      if (Date.now() > until) break;
      Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 20);
    }
  }
  try {
    let all: Record<string, unknown> = {};
    try {
      all = JSON.parse(fs.readFileSync(file, 'utf8')) as Record<string, unknown>;
    } catch {
      /* first write */
    }
    all[key] = {
      ...value,
      database: process.env.TEST_DATABASE_URL ? 'postgres' : 'pglite',
      at: new Date().toISOString(),
      machine: `${os.cpus().length} cores, ${Math.round(os.totalmem() / 2 ** 30)} GiB, ${os.platform()} ${os.arch()}, node ${process.version}`,
    };
    const tmp = `${file}.${process.pid}.tmp`;
    fs.writeFileSync(tmp, JSON.stringify(all, null, 2) + '\n');
    fs.renameSync(tmp, file);
  } finally {
    fs.rmSync(lock, { force: true });
  }
}

/** Percentile of a list of numbers (nearest rank). */
export function percentile(values: number[], p: number): number {
  if (!values.length) return NaN;
  const s = [...values].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil((p / 100) * s.length) - 1))]!;
}

export const sleep = (ms: number) => new Promise<void>((r) => setTimeout(r, ms));

/**
 * Completes the FT-101 job's preparation checklist as its technician (in-date standards, permit,
 * bypass, operators informed, isolated, vented), as tests/integration/jobs-prep.test.ts does, so a
 * run may start. Returns the job id.
 */
export async function prepareFt101(tech: ApiClient): Promise<string> {
  const jobs = (await tech.get('/api/jobs')).body.items as { id: string; tag: string }[];
  const jobId = jobs.find((j) => j.tag === 'FT-101')!.id;
  const stds = (await tech.get('/api/standards')).body.items as { id: string; kind: string; dueState: string }[];
  const pressure = stds.find((s) => s.kind === 'pressure' && s.dueState === 'in-date')!;
  const meter = stds.find((s) => s.kind === 'current' && s.dueState !== 'expired')!;
  const steps = [
    { standardIds: [pressure.id, meter.id], permitNo: 'PTW-PROOF-1' },
    { bypass: { required: true, description: 'Boiler 1 low-feedwater trip' } },
    { bypassRecorded: true, operatorsInformed: true, isolated: true, vented: true },
  ];
  for (const s of steps) {
    const r = await tech.req('PUT', `/api/jobs/${jobId}/checklist`, s);
    if (r.status !== 200) throw new Error(`checklist ${JSON.stringify(s)}: ${r.status} ${JSON.stringify(r.body)}`);
  }
  const d = (await tech.get(`/api/jobs/${jobId}`)).body as { blockers: string[] };
  if (d.blockers.length) throw new Error(`FT-101 still blocked: ${d.blockers.join('; ')}`);
  return jobId;
}
