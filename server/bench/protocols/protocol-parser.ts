/** Node Transform over the shared framer and decoders: bytes in, {@link ProtocolFrame} objects out. */
import { Transform, type TransformCallback } from 'node:stream';
import {
  ProtocolDecoder,
  type DroppedLine,
  type LineClassifier,
  type LineFramerOptions,
  type ProtocolDecoderStats,
  type ProtocolFrame,
} from '../../../shared/protocol';

/** Events of a {@link ProtocolParser} besides the stream's own. */
export interface ProtocolParserEvents {
  /** A line the framer discarded (noise, overlong, partial). */
  dropped: (line: DroppedLine) => void;
}

/**
 * Transform stream: write raw bytes, read {@link ProtocolFrame} objects. A bad frame never
 * errors the stream: framing drops are counted and emitted as `'dropped'`, decoder rejections
 * are counted and passed on as `rejected` frames so a waiting command can fail fast.
 */
export class ProtocolParser extends Transform {
  private readonly decoder: ProtocolDecoder;

  constructor(classify: LineClassifier, framing: LineFramerOptions = {}) {
    super({ readableObjectMode: true, writableObjectMode: false });
    this.decoder = new ProtocolDecoder(classify, framing, (line) => this.emit('dropped', line));
  }

  /** Live counters (framer drops, samples, texts, rejections by reason). */
  get stats(): ProtocolDecoderStats {
    return this.decoder.stats;
  }

  /** Forgets a partial line, e.g. after a reconnect. */
  reset(): void {
    this.decoder.reset();
  }

  override _transform(chunk: Buffer | string, _encoding: BufferEncoding, callback: TransformCallback): void {
    const frames = this.decoder.push(typeof chunk === 'string' ? chunk : new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.byteLength));
    for (const frame of frames) this.push(frame);
    callback();
  }

  override on(event: 'dropped', listener: ProtocolParserEvents['dropped']): this;
  override on(event: 'data', listener: (frame: ProtocolFrame) => void): this;
  override on(event: string | symbol, listener: (...args: never[]) => void): this;
  override on(event: string | symbol, listener: (...args: never[]) => void): this {
    return super.on(event, listener as (...args: unknown[]) => void);
  }
}
