/**
 * API fuzz: every route of `app.locals.routes` (read at run time, so a new route is fuzzed without
 * touching this file), signed in with a role the policy allows, gets fast-check-generated paths,
 * queries and bodies that break its contract. The server must answer each with a 4xx in the error
 * contract `{ error: { code, message, fields? } }`, never a 5xx, and must write nothing.
 *
 * Case kinds per route:
 * - `bad-params`: every path parameter is junk (not a uuid, path traversal, NUL, RTL, lone surrogates,
 *   malformed percent escapes, 1e309 ...) → must be 4xx.
 * - `unknown-id`: well-formed uuids of nothing → must be 4xx (usually 404), whatever the body.
 * - `real-id`: an existing record's id with a body that is not an object (routes that validate a
 *   body only, found by probing) or a junk query on a GET → must not write.
 * - `body`: routes without parameters get junk bodies; a body that is not a JSON object, is not
 *   JSON, is too large or in an unsupported encoding must be 4xx; a junk object may only be
 *   accepted if nothing is written (the generator can stumble on a valid all-optional body).
 * - `query`: GETs get junk query strings; reads may answer 200 but must not fail or write.
 *
 * `PROOF_FUZZ_RUNS` (default 40) sets the cases per route and kind; `PROOF_FUZZ_SEED` replays a run.
 */
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RouteSpec } from '../../server/http/route-table';
import { ApiClient, startTestServer, type TestServer } from '../helpers/test-server';
import {
  busyTables,
  dataTables,
  expectErrorBody,
  prepareFt101,
  rawRequest,
  recordSummary,
  roleFor,
  routesOf,
  rowCounts,
  signInAll,
  type RawResponse,
} from '../helpers/proof-helpers';
import type { Role } from '../../shared/schemas/auth';
import { proofCount } from '../helpers/proof-level';
import { anyBody, badParam, brokenBody, json, nonObjectJson, queryString, type Body } from '../helpers/fuzz-inputs';

const RUNS = proofCount('PROOF_FUZZ_RUNS', 12, 40);
const SEED = Number(process.env.PROOF_FUZZ_SEED ?? Date.now() % 2 ** 31);

let srv: TestServer;
let clients: Record<Role, ApiClient>;
let anon: ApiClient;
let tracked: string[] = [];
let busy: string[] = [];
const realIds: Record<string, string> = {};

// ---------------------------------------------------------------------------------------------
// Set-up
// ---------------------------------------------------------------------------------------------

const paramNames = (p: string) => [...p.matchAll(/:([a-zA-Z]+)/g)].map((m) => m[1]!);

function fill(spec: RouteSpec, values: Record<string, string>): string {
  return spec.path.replace(/:([a-zA-Z]+)/g, (_m, n: string) => values[n] ?? '');
}

/** The id of an existing record for a route's `:id`, by the resource it is under. */
function realIdFor(spec: RouteSpec): string | undefined {
  const m = /^\/api\/([a-z-]+)\/:id/.exec(spec.path);
  return m ? realIds[m[1]!] : undefined;
}

beforeAll(async () => {
  srv = await startTestServer();
  clients = await signInAll(srv.url);
  anon = new ApiClient(srv.url);
  realIds.jobs = await prepareFt101(clients.technician);
  realIds.instruments = (await clients.lead.get('/api/instruments')).body.items[0].id;
  realIds.standards = (await clients.lead.get('/api/standards')).body.items[0].id;
  const users = (await clients.admin.get('/api/users')).body.items as { id: string; email: string }[];
  realIds.users = users.find((u) => u.email.startsWith('auditor@'))!.id;
  // A paused run, so the run routes have a real id to be fuzzed against.
  const run = await clients.technician.post(`/api/jobs/${realIds.jobs}/runs`, { kind: 'mode-check' });
  if (run.status === 201) {
    realIds.runs = run.body.id;
    await clients.technician.post(`/api/runs/${run.body.id}/pause`);
  }
  const tables = await dataTables(srv);
  busy = await busyTables(srv, tables);
  tracked = tables.filter((t) => !busy.includes(t));
}, 120_000);

afterAll(async () => {
  await srv?.close();
});

// ---------------------------------------------------------------------------------------------
// The fuzz
// ---------------------------------------------------------------------------------------------

interface Case {
  kind: 'bad-params' | 'unknown-id' | 'real-id' | 'body' | 'query';
  params: Record<string, string>;
  query: string;
  body: Body;
}

const tally = { cases: 0, routes: 0, byStatus: {} as Record<string, number>, byKind: {} as Record<string, number>, acceptedWithoutWrite: 0, skipped: [] as string[] };

describe('API fuzz: every route, bad input, no 5xx, nothing written', () => {
  it('fuzzes every route in app.locals.routes', async () => {
    const specs = routesOf(srv);
    expect(specs.length).toBeGreaterThan(15);
    const problems: string[] = [];
    console.log(`fuzz: seed ${SEED}, ${RUNS} cases per route and kind; tables tracked: ${tracked.join(', ')}; changing on their own (not tracked): ${busy.join(', ') || 'none'}`);

    for (const spec of specs) {
      const label0 = `${spec.method.toUpperCase()} ${spec.path}`;
      if (spec.path === '/api/auth/logout') {
        tally.skipped.push(`${label0} (ends the session; it takes no input)`);
        continue;
      }
      const role = roleFor(spec.action);
      const client = role ? clients[role] : anon;
      const method = spec.method.toUpperCase();
      const names = paramNames(spec.path);
      const headersFor = (b: Body): Record<string, string> => ({
        ...(client.cookie ? { cookie: client.cookie } : {}),
        ...(method !== 'GET' ? { origin: srv.url } : {}),
        ...(b.contentType ? { 'content-type': b.contentType } : {}),
        ...b.extraHeaders,
      });
      const send = (c: Case): Promise<RawResponse> =>
        rawRequest(srv.url, { method, path: fill(spec, c.params) + c.query, headers: headersFor(c.body), body: c.body.bytes });

      // Probe: does this route validate a body? (A non-object body then yields a root field error '_'.)
      let validatesBody = false;
      if (method !== 'GET') {
        const probeParams = Object.fromEntries(names.map((n) => [n, 'not-an-id']));
        const p = await send({ kind: 'bad-params', params: probeParams, query: '', body: json('probe', '[]', 'if-validated') });
        const fields = (p.json as { error?: { fields?: Record<string, unknown> } } | undefined)?.error?.fields;
        validatesBody = !!fields && '_' in fields;
      }
      const realId = realIdFor(spec);

      const kinds: fc.Arbitrary<Case>[] = [];
      if (names.length) {
        kinds.push(
          fc.record({ kind: fc.constant('bad-params' as const), params: fc.tuple(...names.map(() => badParam)).map((vs) => Object.fromEntries(names.map((n, i) => [n, vs[i]!]))), query: fc.oneof(fc.constant(''), queryString), body: method === 'GET' ? fc.constant<Body>({ label: 'none', strict: false }) : anyBody }),
          fc.record({
            kind: fc.constant('unknown-id' as const),
            params: fc.tuple(...names.map((n) => (n === 'id' ? fc.uuid({ version: 4 }) : fc.oneof(fc.constantFrom('0', '1', '3'), badParam)))).map((vs) => Object.fromEntries(names.map((n, i) => [n, vs[i]!]))),
            query: fc.oneof(fc.constant(''), queryString),
            body: method === 'GET' ? fc.constant<Body>({ label: 'none', strict: false }) : anyBody,
          }),
        );
        if (realId && (method === 'GET' || validatesBody)) {
          kinds.push(
            fc.record({
              kind: fc.constant('real-id' as const),
              params: fc.tuple(...names.map((n) => (n === 'id' ? fc.constant(realId) : fc.oneof(fc.constantFrom('0', '1'), badParam)))).map((vs) => Object.fromEntries(names.map((n, i) => [n, vs[i]!]))),
              query: method === 'GET' ? queryString : fc.oneof(fc.constant(''), queryString),
              body: method === 'GET' ? fc.constant<Body>({ label: 'none', strict: false }) : fc.oneof(nonObjectJson, brokenBody),
            }),
          );
        }
      } else if (method === 'GET') {
        kinds.push(fc.record({ kind: fc.constant('query' as const), params: fc.constant({}), query: queryString, body: fc.constant<Body>({ label: 'none', strict: false }) }));
      } else {
        kinds.push(fc.record({ kind: fc.constant('body' as const), params: fc.constant({}), query: fc.oneof(fc.constant(''), queryString), body: anyBody }));
      }

      const before = await rowCounts(srv, tracked);
      for (const arb of kinds) {
        // A failing route is recorded and the fuzz goes on, so one bug does not hide the others.
        await fc
          .assert(
          fc.asyncProperty(arb, async (c) => {
            const r = await send(c);
            const label = `${label0} [${c.kind}/${c.body.label}] as ${role ?? 'signed-out'} → ${r.status} ${fill(spec, c.params).slice(0, 160)}${c.query.slice(0, 80)}`;
            tally.cases++;
            tally.byStatus[r.status] = (tally.byStatus[r.status] ?? 0) + 1;
            tally.byKind[c.kind] = (tally.byKind[c.kind] ?? 0) + 1;
            expect(r.status, `${label}: ${r.text.slice(0, 300)}`).toBeLessThan(500);
            if (r.status >= 400) expectErrorBody(r, label);
            const mustRefuse =
              c.kind === 'bad-params' || c.kind === 'unknown-id' || c.body.strict === 'always' || (c.body.strict === 'if-validated' && validatesBody);
            if (mustRefuse) expect(r.status, `${label}: must be refused`).toBeGreaterThanOrEqual(400);
            if (r.status < 400 && method !== 'GET') {
              // Accepted: only harmless if nothing was written.
              expect(await rowCounts(srv, tracked), `${label}: accepted and wrote`).toEqual(before);
              tally.acceptedWithoutWrite++;
            }
          }),
          { numRuns: RUNS, seed: SEED, endOnFailure: true },
          )
          .catch((e: Error) => problems.push(((e.cause as Error | undefined)?.message ?? e.message).split('\n')[0]!));
      }
      const after = await rowCounts(srv, tracked);
      if (JSON.stringify(after) !== JSON.stringify(before)) problems.push(`${label0}: rows written by refused requests: ${JSON.stringify(before)} → ${JSON.stringify(after)}`);
      tally.routes++;
    }

    // One case Node itself answers before the app: a URL beyond the 16 KiB header limit.
    const long = await rawRequest(srv.url, { method: 'GET', path: `/api/jobs/${'a'.repeat(20_000)}`, headers: { cookie: clients.lead.cookie } });
    expect(long.status).toBe(431);
    tally.cases++;

    console.log(
      `fuzz: ${tally.cases} cases over ${tally.routes} routes (seed ${SEED}); statuses ${JSON.stringify(tally.byStatus)}; ` +
        `junk objects accepted without a write: ${tally.acceptedWithoutWrite}; skipped: ${tally.skipped.join('; ')}; problems: ${problems.length}`,
    );
    recordSummary('fuzz', { cases: tally.cases, routes: tally.routes, seed: SEED, runsPerKind: RUNS, byStatus: tally.byStatus, byKind: tally.byKind, acceptedWithoutWrite: tally.acceptedWithoutWrite, skipped: tally.skipped, problems });
    expect(tally.routes).toBe(specs.length - tally.skipped.length);
    expect(problems, 'routes that answered bad input wrongly').toEqual([]);
  });
});
