/**
 * The edge check for a line that arrives as text rather than bytes (forwarded by a bench agent or
 * a browser's Web Serial bridge). Lines read from this server's own ports are already framed by
 * {@link LineFramer}, which drops binary and overlong lines; forwarded text gets the same rule
 * here, so nothing that a port could never deliver reaches the hub, the database or the journal.
 */

/** Longest forwarded line, characters (the framer's default longest line is 256 bytes). */
export const MAX_FORWARDED_LINE = 256;

/** Why a forwarded line was refused at the edge. */
export type EdgeRefusal =
  /** A C0 control character other than tab, DEL, or a C1 control (NUL, ESC, BEL, ...). */
  | 'control-character'
  /** A lone UTF-16 surrogate (not valid text; the database refuses it). */
  | 'invalid-text'
  /** Longer than the longest line. */
  | 'overlong'
  /** Nothing left after removing the terminator. */
  | 'empty';

/** Outcome of {@link checkEdgeLine}: the line with any terminator removed, or why it was refused. */
export type EdgeCheck = { ok: true; line: string } | { ok: false; reason: EdgeRefusal; preview: string };

// Tab is allowed (some instruments separate fields with it); every other C0 control, DEL and C1 is not.
// eslint-disable-next-line no-control-regex
const CONTROL = /[\u0000-\u0008\u000a-\u001f\u007f-\u009f]/;
const LONE_SURROGATE = /[\ud800-\udbff](?![\udc00-\udfff])|(?<![\ud800-\udbff])[\udc00-\udfff]/;

/** The refused text with control characters escaped as `\xNN` or `\uNNNN`, cut to 80 characters (for counters and logs). */
export function previewLine(text: string, limit = 80): string {
  let out = '';
  for (const ch of text.slice(0, limit)) {
    const c = ch.codePointAt(0)!;
    out += c < 0x20 || (c >= 0x7f && c <= 0x9f) ? `\\x${c.toString(16).padStart(2, '0')}` : c >= 0xd800 && c <= 0xdfff ? `\\u${c.toString(16)}` : ch;
  }
  return out.slice(0, limit);
}

/**
 * Checks one forwarded line. One trailing CR and/or LF (a terminator the sender left on) is
 * removed first; any other control character refuses the whole line rather than being stripped,
 * because a reading with a byte cut out of it may decode as a different, wrong value.
 */
export function checkEdgeLine(raw: string, maxLength = MAX_FORWARDED_LINE): EdgeCheck {
  const line = raw.replace(/\r?\n?$/, '').replace(/\r$/, '');
  if (line.length > maxLength) return { ok: false, reason: 'overlong', preview: previewLine(line) };
  if (CONTROL.test(line)) return { ok: false, reason: 'control-character', preview: previewLine(line) };
  if (LONE_SURROGATE.test(line)) return { ok: false, reason: 'invalid-text', preview: previewLine(line) };
  if (line.trim() === '') return { ok: false, reason: 'empty', preview: '' };
  return { ok: true, line };
}
