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
import { randomUUID } from 'node:crypto';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RouteSpec } from '../../server/http/route-table';
import { ApiClient, startTestServer, type TestServer } from '../helpers/test-server';
import {
  busyTables,
  dataTables,
  encodeSegment,
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

const RUNS = proofCount('PROOF_FUZZ_RUNS', 12, 40);
const SEED = Number(process.env.PROOF_FUZZ_SEED ?? Date.now() % 2 ** 31);

let srv: TestServer;
let clients: Record<Role, ApiClient>;
let anon: ApiClient;
let tracked: string[] = [];
let busy: string[] = [];
const realIds: Record<string, string> = {};

// ---------------------------------------------------------------------------------------------
// Generators
// ---------------------------------------------------------------------------------------------

/** Values chosen by hand: the classics of bad input. */
const NASTY = [
  '',
  ' ',
  '\u0000',
  'a\u0000b',
  '\uD800',
  '\uDFFF',
  'x\uDBFFy',
  '\u202Eevil\u202C',
  '\u200B\u200D\uFEFF',
  'ﷺ𒐫𓀀',
  '../../../../etc/passwd',
  '..\\..\\..\\windows\\win.ini',
  '/etc/passwd',
  'C:\\boot.ini',
  '....//....//etc/passwd',
  '<script>alert(1)</script>',
  "' OR '1'='1' --",
  '"; DROP TABLE users; --',
  '${7*7}{{7*7}}',
  '__proto__',
  'constructor',
  'null',
  'undefined',
  'NaN',
  'Infinity',
  '-1',
  '1e309',
  '0x7fffffff',
  '00000000-0000-0000-0000-000000000000',
  'ffffffff-ffff-ffff-ffff-ffffffffffffx',
  '%00',
  '\r\nSet-Cookie: x=y',
  // Dates that do not exist or lie beyond any plausible bound (issue 14).
  '2026-02-31',
  '2023-02-29',
  '0000-01-01',
  '9999-12-31',
  '2026-13-01',
  // Indices that are not plain decimal digits.
  '0x1',
  '1e0',
  '+1',
];

const loneSurrogate = fc.constantFrom('\uD800', '\uDBFF', '\uDC00', '\uDFFF');
const junkString = fc.oneof(
  fc.constantFrom(...NASTY),
  fc.string({ maxLength: 30 }),
  fc.string({ unit: 'binary', maxLength: 30 }),
  fc.string({ unit: 'grapheme', maxLength: 20 }),
  fc.tuple(fc.string({ maxLength: 8 }), loneSurrogate, fc.string({ maxLength: 8 })).map(([a, b, c]) => a + b + c),
  fc.integer({ min: 1_000, max: 120_000 }).map((n) => 'x'.repeat(n)),
);

/** Numbers JSON cannot carry as themselves are sent as raw tokens spliced into the JSON text. */
const RAW = (token: string) => `__RAWNUM_${token}__`;
const junkNumber = fc.oneof(
  fc.integer(),
  fc.double().map((d) => (Number.isFinite(d) ? d : RAW(d > 0 ? '1e309' : d < 0 ? '-1e309' : '1e309'))),
  fc.constantFrom(-1, -0, 0, 1e308, -1e308, 1.7e308, -1.7e308, Number.MAX_SAFE_INTEGER + 2, 5e-324, 1e-320, 0.1),
  fc.constantFrom(RAW('1e309'), RAW('-1e309'), RAW('1e-400'), RAW('123456789012345678901234567890'), RAW('-0.0e0')),
);

const FIELD_NAMES = [
  'email', 'password', 'name', 'role', 'active', 'tag', 'service', 'location', 'kind', 'serial', 'unit', 'lrv', 'urv',
  'rangeMin', 'rangeMax', 'outputMode', 'cutoff', 'tolerancePct', 'intervalDays', 'instrumentId', 'assigneeId', 'standardIds',
  'permitNo', 'bypass', 'decision', 'meaning', 'comment', 'reason', 'csv', 'confirm', 'readings', 'points', 'instrument',
  'standards', 'transmitter', 'autopilot', 'setpoint', 'faults', 'source', 'dueOn', 'calibratedOn', 'accuracy', 'trim',
  'benchId', 'dueDate', 'revision', 'type', 'lines', 'runId', 'lastCalibratedOn', 'current', 'next', 'index',
];
const junkKey = fc.oneof(fc.constantFrom(...FIELD_NAMES), fc.constantFrom('__proto__', 'constructor', 'prototype', '', 'k\uD800', '\uDC00'), fc.string({ maxLength: 12 }));

const { value: junkValue } = fc.letrec<{ value: unknown }>((tie) => ({
  value: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    junkString,
    junkNumber,
    fc.boolean(),
    fc.constant(null),
    fc.array(tie('value'), { maxLength: 5 }),
    fc.dictionary(junkKey, tie('value'), { maxKeys: 5 }),
  ),
}));
const junkObject = fc.dictionary(junkKey, junkValue, { minKeys: 1, maxKeys: 8 });
/** An object whose every known field holds the wrong kind of value. */
const wrongTypedObject = fc
  .subarray(FIELD_NAMES, { minLength: 1, maxLength: 10 })
  .chain((keys) => fc.tuple(...keys.map((k) => fc.tuple(fc.constant(k), fc.oneof(fc.array(junkValue, { maxLength: 3 }), junkNumber, fc.constant(null), fc.boolean(), junkString)))))
  .map((pairs) => Object.fromEntries(pairs));

function toJson(v: unknown): string {
  return JSON.stringify(v).replace(/"__RAWNUM_(.*?)__"/g, '$1');
}

interface Body {
  label: string;
  contentType?: string;
  extraHeaders?: Record<string, string>;
  bytes?: Buffer;
  /**
   * 'always': no route can accept it (the JSON parser refuses it first); 'if-validated': no route
   * that validates a body can accept it (not a JSON object); false: it might happen to be valid.
   */
  strict: 'always' | 'if-validated' | false;
}

const json = (label: string, text: string, strict: Body['strict']): Body => ({ label, contentType: 'application/json', bytes: Buffer.from(text, 'utf8'), strict });

const nonObjectJson: fc.Arbitrary<Body> = fc.oneof(
  fc.array(junkValue, { maxLength: 6 }).map((v) => json('array', toJson(v), 'if-validated')),
  fc.oneof(junkString, junkNumber, fc.boolean(), fc.constant(null)).map((v) => json('primitive', toJson(v), 'if-validated')),
  fc.array(junkObject, { minLength: 1, maxLength: 3 }).map((v) => json('array-of-objects', toJson(v), 'if-validated')),
);

const brokenBody: fc.Arbitrary<Body> = fc.oneof(
  fc
    .constantFrom('{', '{"a":', '[1,2', 'nul', '{"a":1}}', "{'a':1}", '{"a":NaN}', '{"a":Infinity}', '{"a":-}', '\u0000', '{"a":"\\ud800"', '{"a":1,}', '\uFEFF{"a":1}')
    .map((t) => json('malformed-json', t, 'always')),
  fc.constant(json('oversize', `{"a":"${'x'.repeat(1_100_000)}"}`, 'always')),
  fc.constant(json('deep-nesting', `${'['.repeat(20_000)}${']'.repeat(20_000)}`, 'always')),
  fc.constant<Body>({ label: 'bad-charset', contentType: 'application/json; charset=ebcdic', bytes: Buffer.from('{"a":1}'), strict: 'always' }),
  fc.constant<Body>({ label: 'bad-encoding', contentType: 'application/json', extraHeaders: { 'content-encoding': 'x-unknown' }, bytes: Buffer.from('{"a":1}'), strict: 'always' }),
  fc.constant<Body>({ label: 'bad-gzip', contentType: 'application/json', extraHeaders: { 'content-encoding': 'gzip' }, bytes: Buffer.from('not gzip at all'), strict: 'always' }),
);

/**
 * Bodies that are valid but for one field (issue 14): a date that does not exist or is out of
 * bounds, a range that is huge, tiny or infinite, or text holding a lone surrogate. They reach the
 * refinements that shape-only junk never does.
 */
const BAD_DATES = ['2026-02-31', '2023-02-29', '0000-01-01', '9999-12-31', '2999-01-01', '2026-13-01', '2026-00-10'];
const BAD_RANGES: [unknown, unknown][] = [[-1.7e308, 1.7e308], [0, 1e308], [0, 5e-324], [5e-324, 1e-323], [0, RAW('1e309')], [-1e300, 0]];
const STANDARD_BODY = { kind: 'pressure', description: 'Fuzz module', serial: 'FUZZ-1', rangeMin: 0, rangeMax: 100, unit: 'kPa', accuracy: { pctReading: 0.02 }, resolution: 0.001, certificateNo: 'F-1', calibratedOn: '2026-01-10', dueOn: '2027-01-10' };
const INSTRUMENT_BODY = { tag: 'FZ-101', kind: 'dp-flow', lrv: 0, urv: 100, unit: 'kPa', outputMode: 'linear', tolerancePct: 0.5, intervalDays: 365 };
const nearValid: fc.Arbitrary<unknown> = fc.oneof(
  fc.tuple(fc.constantFrom(...BAD_DATES), fc.constantFrom('calibratedOn', 'dueOn')).map(([d, f]) => ({ ...STANDARD_BODY, [f]: d })),
  fc.tuple(fc.constantFrom(...BAD_DATES), fc.uuid({ version: 4 })).map(([d, instrumentId]) => ({ instrumentId, dueOn: d })),
  fc.constantFrom(...BAD_RANGES).map(([lrv, urv]) => ({ ...INSTRUMENT_BODY, lrv, urv })),
  fc.constantFrom(...BAD_RANGES).map(([rangeMin, rangeMax]) => ({ ...STANDARD_BODY, rangeMin, rangeMax })),
  // Each body is invalid for every route: the surrogate sits in a field its own schema reads.
  loneSurrogate.map((u) => ({ ...STANDARD_BODY, description: `x${u}y` })),
  loneSurrogate.map((u) => ({ ...INSTRUMENT_BODY, notes: `x${u}y` })),
  loneSurrogate.map((u) => ({ permitNo: `PTW-${u}` })),
);

const objectBody: fc.Arbitrary<Body> = fc.oneof(
  nearValid.map((v) => json('near-valid', toJson(v), false)),
  junkObject.map((v) => json('object', toJson(v), false)),
  wrongTypedObject.map((v) => json('wrong-types', toJson(v), false)),
  fc.constant(json('large-string', toJson({ csv: 'a,b\n'.repeat(220_000), name: 'x'.repeat(100_000) }), false)),
  fc.constant(json('many-keys', toJson(Object.fromEntries(Array.from({ length: 60_000 }, (_, i) => [`k${i}`, i]))), false)),
  fc.constant(json('invalid-utf8', Buffer.from([0x7b, 0x22, 0x6e, 0x61, 0x6d, 0x65, 0x22, 0x3a, 0x22, 0xff, 0xfe, 0xc3, 0x28, 0x22, 0x7d]).toString('latin1'), false)),
);

function multipart(parts: { name: string; filename?: string; type?: string; data: Buffer | string }[], boundary = 'proofBoundary7MA4YWxk'): Buffer {
  const chunks: Buffer[] = [];
  for (const p of parts) {
    chunks.push(
      Buffer.from(
        `--${boundary}\r\nContent-Disposition: form-data; name="${p.name}"${p.filename !== undefined ? `; filename="${p.filename}"` : ''}\r\n` +
          (p.type ? `Content-Type: ${p.type}\r\n` : '') +
          '\r\n',
      ),
    );
    chunks.push(Buffer.isBuffer(p.data) ? p.data : Buffer.from(p.data));
    chunks.push(Buffer.from('\r\n'));
  }
  chunks.push(Buffer.from(`--${boundary}--\r\n`));
  return Buffer.concat(chunks);
}
const MP = 'multipart/form-data; boundary=proofBoundary7MA4YWxk';

/** Other content types: form posts, text, multipart with the wrong field, two files, binary, traversal names, truncation. */
const otherBody: fc.Arbitrary<Body> = fc.oneof(
  junkString.map((s) => ({ label: 'text/plain', contentType: 'text/plain', bytes: Buffer.from(s.slice(0, 50_000)), strict: false as const })),
  junkString.map((s) => ({ label: 'form', contentType: 'application/x-www-form-urlencoded', bytes: Buffer.from(`a=${encodeSegment(s.slice(0, 2000))}&__proto__[x]=1`), strict: false as const })),
  fc.constant<Body>({ label: 'multipart-wrong-field', contentType: MP, bytes: multipart([{ name: 'notthefile', filename: 'a.csv', type: 'text/csv', data: 'tag\nFT-1' }]), strict: false }),
  fc.constant<Body>({
    label: 'multipart-two-files',
    contentType: MP,
    bytes: multipart([
      { name: 'file', filename: 'a.csv', type: 'text/csv', data: 'tag\nFT-1' },
      { name: 'file', filename: 'b.csv', type: 'text/csv', data: 'tag\nFT-2' },
    ]),
    strict: false as const,
  }),
  fc.constantFrom('../../../etc/passwd', '..\\..\\x.csv', '/abs/path.csv', 'a\u0000.csv', '\u202Ecsv.exe', 'C:\\x.csv').map((filename) => ({
    label: 'multipart-traversal-name',
    contentType: MP,
    bytes: multipart([{ name: 'file', filename, type: 'text/csv', data: 'not,a,register\n1,2,3' }]),
    strict: false as const,
  })),
  fc.constant<Body>({ label: 'multipart-binary', contentType: MP, bytes: multipart([{ name: 'file', filename: 'a.csv', type: 'text/csv', data: Buffer.from([0x89, 0x50, 0x4e, 0x47, 0, 0, 0xff, 0xfe]) }]), strict: false }),
  fc.constant<Body>({ label: 'multipart-too-big', contentType: MP, bytes: multipart([{ name: 'file', filename: 'a.csv', type: 'text/csv', data: 'x,'.repeat(1_200_000) }]), strict: false }),
  fc.constant<Body>({ label: 'multipart-truncated', contentType: MP, bytes: multipart([{ name: 'file', filename: 'a.csv', type: 'text/csv', data: 'tag\nFT-1' }]).subarray(0, 60), strict: false }),
  fc.constant<Body>({ label: 'multipart-no-boundary', contentType: 'multipart/form-data', bytes: Buffer.from('--x\r\n\r\nhello\r\n--x--'), strict: false }),
  fc.constant<Body>({ label: 'multipart-garbage', contentType: MP, bytes: Buffer.from('\r\n\r\n--proofBoundary7MA4YWxk\r\nContent-Disposition: nonsense\r\n\r\n\r\n'), strict: false }),
  fc.constant<Body>({
    label: 'multipart-many-fields',
    contentType: MP,
    bytes: multipart(Array.from({ length: 40 }, (_, i) => ({ name: `f${i}`, data: 'v' }))),
    strict: false as const,
  }),
  fc.constant<Body>({ label: 'csv-too-big', contentType: 'text/csv', bytes: Buffer.from('a,'.repeat(1_100_001)), strict: false }),
);

const anyBody: fc.Arbitrary<Body> = fc.oneof(nonObjectJson, brokenBody, objectBody, otherBody, fc.constant<Body>({ label: 'none', strict: false as const }));

/** A path parameter that is not an id: [text, already encoded?]. */
const badParam: fc.Arbitrary<string> = fc.oneof(
  fc.oneof(junkString.map((s) => s.slice(0, 3000)), fc.constantFrom(...NASTY), junkNumber.map(String)).filter((s) => s.length > 0).map(encodeSegment),
  // Malformed or tricky escapes sent as they are.
  fc.constantFrom('%', '%E0%A4%A', '%ZZ', '%2e%2e%2f%2e%2e%2fetc%2fpasswd', '..%2F..%2F', '%C0%AE%C0%AE%2F', '..', '.', '%00', '%uD800', randomUUID().toUpperCase() + '%00'),
);

const QUERY_KEYS = ['limit', 'page', 'pageSize', 'from', 'to', 'after', 'since', 'sort', 'dir', 'q', 'entity', 'entityId', 'afterId', 'benchId', 'device', 'confirm', 'status', 'tag', 'kind', 'format'];
const queryString: fc.Arbitrary<string> = fc
  .array(
    fc.tuple(
      fc.oneof(fc.constantFrom(...QUERY_KEYS), fc.string({ maxLength: 8 }), fc.constantFrom('__proto__', 'a[b]', 'limit[]', 'constructor[prototype]')),
      fc.oneof(
        fc.constantFrom('-1', '0', '1e309', '-1e309', 'NaN', 'Infinity', '0x10', '1.5', ' 1', '', '9'.repeat(40), 'asc;drop', 'DESC', 'true', '[]', '{}'),
        junkString.map((s) => s.slice(0, 1500)),
      ),
    ),
    { minLength: 1, maxLength: 6 },
  )
  .map((pairs) => '?' + pairs.map(([k, v]) => `${encodeSegment(k)}=${encodeSegment(v)}`).join('&'));

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
