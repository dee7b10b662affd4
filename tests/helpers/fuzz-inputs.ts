/**
 * Generators of the API fuzz proof (`tests/proof/api-fuzz.test.ts`): junk strings, numbers, keys
 * and objects, bodies that are not JSON objects or not JSON at all, near-valid register bodies,
 * other content types, junk path parameters and junk query strings.
 */
import { randomUUID } from 'node:crypto';
import fc from 'fast-check';
import { encodeSegment } from './proof-helpers';

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

export interface Body {
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

export const json = (label: string, text: string, strict: Body['strict']): Body => ({ label, contentType: 'application/json', bytes: Buffer.from(text, 'utf8'), strict });

export const nonObjectJson: fc.Arbitrary<Body> = fc.oneof(
  fc.array(junkValue, { maxLength: 6 }).map((v) => json('array', toJson(v), 'if-validated')),
  fc.oneof(junkString, junkNumber, fc.boolean(), fc.constant(null)).map((v) => json('primitive', toJson(v), 'if-validated')),
  fc.array(junkObject, { minLength: 1, maxLength: 3 }).map((v) => json('array-of-objects', toJson(v), 'if-validated')),
);

export const brokenBody: fc.Arbitrary<Body> = fc.oneof(
  fc
    .constantFrom('{', '{"a":', '[1,2', 'nul', '{"a":1}}', "{'a':1}", '{"a":NaN}', '{"a":Infinity}', '{"a":-}', '\u0000', '{"a":"\\ud800"', '{"a":1,}')
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
  // Not broken: RFC 8259 §8.1 lets a parser ignore a leading byte order mark, and Express's parser
  // does, so this is the object {"a":1} and may be accepted where an all-optional body is.
  fc.constant(json('bom-object', '\uFEFF{"a":1}', false)),
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

export const anyBody: fc.Arbitrary<Body> = fc.oneof(nonObjectJson, brokenBody, objectBody, otherBody, fc.constant<Body>({ label: 'none', strict: false as const }));

/** A path parameter that is not an id: [text, already encoded?]. */
export const badParam: fc.Arbitrary<string> = fc.oneof(
  fc.oneof(junkString.map((s) => s.slice(0, 3000)), fc.constantFrom(...NASTY), junkNumber.map(String)).filter((s) => s.length > 0).map(encodeSegment),
  // Malformed or tricky escapes sent as they are.
  fc.constantFrom('%', '%E0%A4%A', '%ZZ', '%2e%2e%2f%2e%2e%2fetc%2fpasswd', '..%2F..%2F', '%C0%AE%C0%AE%2F', '..', '.', '%00', '%uD800', randomUUID().toUpperCase() + '%00'),
);

const QUERY_KEYS = ['limit', 'page', 'pageSize', 'from', 'to', 'after', 'since', 'sort', 'dir', 'q', 'entity', 'entityId', 'afterId', 'benchId', 'device', 'confirm', 'status', 'tag', 'kind', 'format'];
export const queryString: fc.Arbitrary<string> = fc
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
