/**
 * Content type by magic bytes, for the few types Stillpoint accepts as uploads (standards'
 * certificates, photos of nameplates, CSV registers). The declared type (from the browser) is only
 * a claim: a file is accepted when its bytes are of the declared kind.
 */

/** Types the product stores. */
export const ALLOWED_TYPES = ['application/pdf', 'image/png', 'image/jpeg', 'image/webp', 'text/csv', 'text/plain'] as const;
/** One of {@link ALLOWED_TYPES}. */
export type AllowedType = (typeof ALLOWED_TYPES)[number];

/** What the bytes look like; text covers both CSV and plain text. */
export type SniffedKind = 'pdf' | 'png' | 'jpeg' | 'webp' | 'text';

/** Result of {@link checkUpload}. */
export type CheckResult =
  | { ok: true; type: AllowedType }
  | { ok: false; code: 'type_mismatch' | 'unsupported_type'; message: string };

const KIND_OF: Readonly<Record<AllowedType, SniffedKind>> = {
  'application/pdf': 'pdf',
  'image/png': 'png',
  'image/jpeg': 'jpeg',
  'image/webp': 'webp',
  'text/csv': 'text',
  'text/plain': 'text',
};

/**
 * Other names browsers and tools send for the same types. Windows browsers commonly declare a
 * .csv file as `application/vnd.ms-excel` (common practice to accept; the content check still
 * requires text).
 */
const ALIASES: Readonly<Record<string, AllowedType>> = {
  'application/x-pdf': 'application/pdf',
  'image/jpg': 'image/jpeg',
  'image/pjpeg': 'image/jpeg',
  'application/csv': 'text/csv',
  'text/x-csv': 'text/csv',
  'text/comma-separated-values': 'text/csv',
  'application/vnd.ms-excel': 'text/csv',
};

const KIND_NAMES: Readonly<Record<SniffedKind, string>> = { pdf: 'PDF', png: 'PNG', jpeg: 'JPEG', webp: 'WebP', text: 'text' };

const PNG_SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

function startsWith(bytes: Uint8Array, sig: readonly number[], at = 0): boolean {
  if (bytes.length < at + sig.length) return false;
  return sig.every((b, i) => bytes[at + i] === b);
}

function ascii(s: string): number[] {
  return [...s].map((c) => c.charCodeAt(0));
}

/** Valid UTF-8 (a BOM allowed) with no NUL byte: what we accept as text. */
export function isText(bytes: Uint8Array): boolean {
  if (bytes.includes(0)) return false;
  try {
    new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    return true;
  } catch {
    return false;
  }
}

/**
 * The kind of the content, or undefined when it is none we accept. Pass the whole content: text
 * is only recognised when every byte is valid UTF-8.
 */
export function sniffKind(bytes: Uint8Array): SniffedKind | undefined {
  // PDF 1.7 (ISO 32000-1) §7.5.2: the file begins with a header line `%PDF-1.n`.
  if (startsWith(bytes, ascii('%PDF-'))) return 'pdf';
  // PNG (ISO/IEC 15948) §5.2: eight-byte signature.
  if (startsWith(bytes, PNG_SIGNATURE)) return 'png';
  // JPEG: SOI marker FF D8 followed by the next marker's FF.
  if (startsWith(bytes, [0xff, 0xd8, 0xff])) return 'jpeg';
  // WebP: a RIFF container whose form type at offset 8 is `WEBP`.
  if (startsWith(bytes, ascii('RIFF')) && startsWith(bytes, ascii('WEBP'), 8)) return 'webp';
  if (bytes.length > 0 && isText(bytes)) return 'text';
  return undefined;
}

/** The canonical allowed type for a declared Content-Type, parameters and case ignored. */
export function normaliseDeclaredType(declared: string | undefined): AllowedType | undefined {
  if (!declared) return undefined;
  const bare = declared.split(';')[0]!.trim().toLowerCase();
  if ((ALLOWED_TYPES as readonly string[]).includes(bare)) return bare as AllowedType;
  return ALIASES[bare];
}

/**
 * Check an upload's content against its declared type.
 * - `unsupported_type`: the declared type is not one we store, or the content is none we accept
 *   (including an empty file).
 * - `type_mismatch`: both are acceptable kinds but differ (a PNG declared as a PDF).
 */
export function checkUpload(input: { declaredType: string | undefined; bytes: Uint8Array }): CheckResult {
  const declared = normaliseDeclaredType(input.declaredType);
  if (!declared) {
    return { ok: false, code: 'unsupported_type', message: `Files of type '${input.declaredType ?? 'unknown'}' are not accepted; use PDF, PNG, JPEG, WebP, CSV or plain text` };
  }
  if (input.bytes.length === 0) return { ok: false, code: 'unsupported_type', message: 'The file is empty' };
  const kind = sniffKind(input.bytes);
  if (!kind) return { ok: false, code: 'unsupported_type', message: 'The file content is not PDF, PNG, JPEG, WebP or UTF-8 text' };
  const expected = KIND_OF[declared];
  if (kind !== expected) {
    return { ok: false, code: 'type_mismatch', message: `The file was sent as ${KIND_NAMES[expected]} but its content is ${KIND_NAMES[kind]}` };
  }
  return { ok: true, type: declared };
}
