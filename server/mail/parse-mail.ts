/**
 * A small MIME reader for the subset of messages nodemailer composes: folded headers, RFC 2047
 * encoded words (B and Q), `multipart/*` nesting, and 7bit / 8bit / quoted-printable / base64
 * bodies in any charset `TextDecoder` knows. It is for the local fake SMTP server and the Outbox,
 * not a general mail parser: attachments are skipped, only the first text/plain and text/html
 * parts are kept.
 */

/** What the Outbox needs from one message. */
export interface ParsedMail {
  /** The From header, decoded (display name and address). */
  from: string;
  /** Addresses from the To and Cc headers, bare (`a@example.test`). */
  to: string[];
  subject: string;
  /** The Date header as an ISO string, when present and parseable. */
  date?: string;
  /** The Message-ID header without its angle brackets. */
  messageId?: string;
  text: string;
  html?: string;
}

interface Part {
  headers: Map<string, string[]>;
  body: Buffer;
}

const CRLF2 = Buffer.from('\r\n\r\n');
const LF2 = Buffer.from('\n\n');

/** Split a raw entity into its header block and body. */
function splitEntity(raw: Buffer): Part {
  let at = raw.indexOf(CRLF2);
  let sep = 4;
  const lf = raw.indexOf(LF2);
  if (at < 0 || (lf >= 0 && lf < at)) {
    at = lf;
    sep = 2;
  }
  const head = at < 0 ? raw.toString('latin1') : raw.subarray(0, at).toString('latin1');
  const body = at < 0 ? Buffer.alloc(0) : raw.subarray(at + sep);
  return { headers: parseHeaders(head), body };
}

/** Unfold and collect headers; names lower-cased, values kept in order, still encoded. */
export function parseHeaders(block: string): Map<string, string[]> {
  const headers = new Map<string, string[]>();
  const lines = block.split(/\r?\n/);
  const unfolded: string[] = [];
  for (const line of lines) {
    if (/^[ \t]/.test(line) && unfolded.length > 0) unfolded[unfolded.length - 1] += line;
    else if (line.length > 0) unfolded.push(line);
  }
  for (const line of unfolded) {
    const colon = line.indexOf(':');
    if (colon <= 0) continue;
    const name = line.slice(0, colon).trim().toLowerCase();
    const value = line.slice(colon + 1).trim();
    const list = headers.get(name) ?? [];
    list.push(value);
    headers.set(name, list);
  }
  return headers;
}

function decodeCharset(bytes: Uint8Array, charset: string | undefined): string {
  const label = (charset ?? 'utf-8').trim().toLowerCase();
  try {
    return new TextDecoder(label).decode(bytes);
  } catch {
    // Unknown label: UTF-8 is what nodemailer writes, so it is the best guess.
    return new TextDecoder('utf-8').decode(bytes);
  }
}

/** Decode a quoted-printable body (RFC 2045 §6.7) to bytes; soft line breaks removed. */
export function decodeQuotedPrintable(input: string): Buffer {
  const out: number[] = [];
  const s = input.replace(/=\r?\n/g, '');
  for (let i = 0; i < s.length; i++) {
    const c = s[i]!;
    if (c === '=' && /^[0-9A-Fa-f]{2}$/.test(s.slice(i + 1, i + 3))) {
      out.push(parseInt(s.slice(i + 1, i + 3), 16));
      i += 2;
    } else {
      const code = c.charCodeAt(0);
      // The input came from latin1, so every char is one byte.
      out.push(code & 0xff);
    }
  }
  return Buffer.from(out);
}

/** Decode RFC 2047 encoded words; whitespace between two adjacent encoded words is dropped. */
export function decodeEncodedWords(value: string): string {
  const word = /=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g;
  const joined = value.replace(/(=\?[^?]+\?[BbQq]\?[^?]*\?=)\s+(?==\?)/g, '$1');
  return joined.replace(word, (_m, charset: string, enc: string, text: string) => {
    const cs = charset.split('*')[0]; // RFC 2231 language suffix
    const bytes =
      enc.toUpperCase() === 'B' ? Buffer.from(text, 'base64') : decodeQuotedPrintable(text.replace(/_/g, ' '));
    return decodeCharset(bytes, cs);
  });
}

/** The value and parameters of a structured header such as Content-Type. */
export function parseParams(value: string): { value: string; params: Record<string, string> } {
  const parts: string[] = [];
  let cur = '';
  let quoted = false;
  for (const ch of value) {
    if (ch === '"') quoted = !quoted;
    if (ch === ';' && !quoted) {
      parts.push(cur);
      cur = '';
    } else cur += ch;
  }
  parts.push(cur);
  const params: Record<string, string> = {};
  for (const p of parts.slice(1)) {
    const eq = p.indexOf('=');
    if (eq < 0) continue;
    const k = p.slice(0, eq).trim().toLowerCase();
    let v = p.slice(eq + 1).trim();
    if (v.startsWith('"') && v.endsWith('"')) v = v.slice(1, -1).replace(/\\(.)/g, '$1');
    params[k] = v;
  }
  return { value: (parts[0] ?? '').trim().toLowerCase(), params };
}

/** Bare addresses from an address-list header (`"A, B" <a@x>, b@y` → `a@x`, `b@y`). */
export function parseAddressList(value: string): string[] {
  const out: string[] = [];
  let cur = '';
  let quoted = false;
  let angle = 0;
  const flush = () => {
    const m = /<([^>]*)>/.exec(cur);
    const addr = (m ? m[1]! : cur).trim();
    if (addr.includes('@')) out.push(addr);
    cur = '';
  };
  for (const ch of value) {
    if (ch === '"') quoted = !quoted;
    else if (!quoted && ch === '<') angle++;
    else if (!quoted && ch === '>') angle = Math.max(0, angle - 1);
    if (ch === ',' && !quoted && angle === 0) flush();
    else cur += ch;
  }
  flush();
  return out;
}

function first(headers: Map<string, string[]>, name: string): string | undefined {
  return headers.get(name)?.[0];
}

function decodeBody(part: Part): Buffer {
  const cte = (first(part.headers, 'content-transfer-encoding') ?? '7bit').trim().toLowerCase();
  if (cte === 'base64') return Buffer.from(part.body.toString('latin1').replace(/\s+/g, ''), 'base64');
  if (cte === 'quoted-printable') return decodeQuotedPrintable(part.body.toString('latin1'));
  return part.body;
}

/** Split a multipart body on its boundary; preamble and epilogue dropped. */
function splitMultipart(body: Buffer, boundary: string): Buffer[] {
  const text = body.toString('latin1');
  const delimiter = `--${boundary}`;
  const lines = text.split(/\r?\n/);
  const parts: string[][] = [];
  let current: string[] | undefined;
  for (const line of lines) {
    const trimmed = line.trimEnd();
    if (trimmed === `${delimiter}--`) {
      if (current) parts.push(current);
      current = undefined;
      break;
    }
    if (trimmed === delimiter) {
      if (current) parts.push(current);
      current = [];
      continue;
    }
    current?.push(line);
  }
  if (current) parts.push(current);
  return parts.map((p) => Buffer.from(p.join('\r\n'), 'latin1'));
}

/** Walk the MIME tree depth first; the first inline text/plain and text/html win. */
function collectBodies(part: Part, found: { text?: string; html?: string }, depth = 0): void {
  if (depth > 8) return;
  const ct = parseParams(first(part.headers, 'content-type') ?? 'text/plain; charset=us-ascii');
  const disposition = parseParams(first(part.headers, 'content-disposition') ?? 'inline').value;
  if (ct.value.startsWith('multipart/')) {
    const boundary = ct.params.boundary;
    if (!boundary) return;
    for (const child of splitMultipart(part.body, boundary)) collectBodies(splitEntity(child), found, depth + 1);
    return;
  }
  if (disposition === 'attachment') return;
  if (ct.value === 'text/plain' && found.text === undefined) found.text = decodeCharset(decodeBody(part), ct.params.charset);
  else if (ct.value === 'text/html' && found.html === undefined) found.html = decodeCharset(decodeBody(part), ct.params.charset);
}

/** Parse one raw RFC 5322 message (as received over SMTP, dot-unstuffed). */
export function parseMail(raw: Buffer | string): ParsedMail {
  const buf = typeof raw === 'string' ? Buffer.from(raw, 'utf8') : raw;
  // The line break that ends the last line belongs to the message framing, as the one before a
  // multipart delimiter belongs to the delimiter (RFC 2046 §5.1.1); drop it so both agree.
  const end = buf.length - (buf.subarray(-2).toString('latin1') === '\r\n' ? 2 : buf.at(-1) === 0x0a ? 1 : 0);
  const root = splitEntity(buf.subarray(0, end));
  const h = root.headers;
  const found: { text?: string; html?: string } = {};
  collectBodies(root, found);
  const to = [...(h.get('to') ?? []), ...(h.get('cc') ?? [])].flatMap((v) => parseAddressList(decodeEncodedWords(v)));
  const dateHeader = first(h, 'date');
  const date = dateHeader ? new Date(dateHeader) : undefined;
  const messageId = first(h, 'message-id')?.replace(/^<|>$/g, '');
  return {
    from: decodeEncodedWords(first(h, 'from') ?? ''),
    to,
    subject: decodeEncodedWords(first(h, 'subject') ?? ''),
    ...(date && !Number.isNaN(date.getTime()) ? { date: date.toISOString() } : {}),
    ...(messageId ? { messageId } : {}),
    text: found.text ?? '',
    ...(found.html !== undefined ? { html: found.html } : {}),
  };
}
