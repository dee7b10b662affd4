/** The shape of a typed HART command codec, and a bounds-checked reader for the data field. */
import { decodeDate, decodeFloat, readUint, unpackAscii, type HartDate } from './data-types';

/**
 * One command's request and response data (the bytes after the byte count, status excluded).
 * Decoders return `undefined` when the data is too short for the fields; extra bytes are ignored
 * (later protocol revisions append fields; from memory of HCF_SPEC-127's backward-compatibility rule).
 */
export interface HartCommandCodec<Req, Res> {
  readonly command: number;
  /** Short name in words, used in errors and the record: "read dynamic variables". */
  readonly name: string;
  /** Whether the command changes the device (refused under write protect), for the record. */
  readonly writes: boolean;
  /** Set when neither request nor reply carries data (decoders then return `undefined` as the value). */
  readonly noData?: true;
  encodeRequest(request: Req): Uint8Array;
  decodeRequest(data: Uint8Array): Req | undefined;
  encodeResponse(response: Res): Uint8Array;
  decodeResponse(data: Uint8Array): Res | undefined;
}

/** Reads fields in order; every read past the end returns `undefined` and marks the reader short. */
export class FieldReader {
  private at = 0;
  short = false;

  constructor(private readonly data: Uint8Array) {}

  /** Bytes left. */
  get remaining(): number {
    return this.data.length - this.at;
  }

  private take(n: number): number | undefined {
    if (this.at + n > this.data.length) {
      this.short = true;
      return undefined;
    }
    const from = this.at;
    this.at += n;
    return from;
  }

  uint(n = 1): number {
    const from = this.take(n);
    return from === undefined ? 0 : readUint(this.data, from, n);
  }

  float(): number {
    const from = this.take(4);
    return from === undefined ? Number.NaN : (decodeFloat(this.data, from) ?? Number.NaN);
  }

  ascii(bytes: number): string {
    const from = this.take(bytes);
    return from === undefined ? '' : unpackAscii(this.data.subarray(from, from + bytes)).trimEnd();
  }

  date(): HartDate {
    const from = this.take(3);
    return from === undefined ? { year: 1900, month: 0, day: 0 } : decodeDate(this.data, from);
  }

  bytes(n: number): Uint8Array {
    const from = this.take(n);
    return from === undefined ? new Uint8Array(0) : this.data.slice(from, from + n);
  }

  /** `value` unless a read ran short. */
  result<T>(value: T): T | undefined {
    return this.short ? undefined : value;
  }
}

/** A command whose request and response carry no data. */
export function emptyCodec(command: number, name: string, writes: boolean): HartCommandCodec<void, void> {
  const none = new Uint8Array(0);
  return {
    command,
    name,
    writes,
    noData: true,
    encodeRequest: () => none,
    decodeRequest: () => undefined,
    encodeResponse: () => none,
    decodeResponse: () => undefined,
  };
}
