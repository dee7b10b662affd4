/**
 * Framer plus decoder for one device: bytes in, classified frames out, with counters. The server
 * wraps it in a Node Transform; the browser feeds it from Web Serial.
 */
import { LineFramer, type DroppedLine, type FramerStats, type LineFramerOptions } from './line-framer';
import { createLineDecoder, type LineProtocolProfile } from './line-profile';
import { decodeScpiCurrent, parseIdentity } from './scpi';
import { emptyRejectCounts, type DecodedSample, type DecodeFailureReason, type DeviceKind } from './sample';

/** A complete line, classified. */
export type ProtocolFrame =
  /** A reading. */
  | { type: 'sample'; sample: DecodedSample }
  /** A well-formed reply that is not a reading (identification, error queue). */
  | { type: 'text'; raw: string }
  /** A reply-shaped line whose content is unusable; counted in `rejected`. */
  | { type: 'rejected'; raw: string; reason: DecodeFailureReason; detail?: string };

/** Turns one complete line into a frame. Must not throw. */
export type LineClassifier = (line: string) => ProtocolFrame;

/** Counters of a {@link ProtocolDecoder}. */
export interface ProtocolDecoderStats {
  framer: FramerStats;
  samples: number;
  texts: number;
  rejected: Record<DecodeFailureReason, number>;
}

/** SYST:ERR? reply: `<code>,"<message>"`. */
const SCPI_ERROR_ENTRY = /^[+-]?\d+,".*"$/;

/**
 * Classifier for an SCPI current meter: numbers are DC current readings in A (→ mA), `*IDN?`
 * and `SYST:ERR?` replies are text, anything else is rejected as `not-a-number`.
 */
export const classifyScpiMeterLine: LineClassifier = (line) => {
  const decoded = decodeScpiCurrent(line);
  if (decoded.ok) return { type: 'sample', sample: { device: 'current', raw: line, value: decoded.value, unit: decoded.unit } };
  if (decoded.reason === 'not-a-number' && (parseIdentity(line) || SCPI_ERROR_ENTRY.test(line.trim()))) {
    return { type: 'text', raw: line };
  }
  return { type: 'rejected', raw: line, reason: decoded.reason, ...(decoded.detail ? { detail: decoded.detail } : {}) };
};

/** Classifier for a pressure calibrator speaking `profile`: matches are readings, the rest rejected. */
export function createCalibratorClassifier(profile: LineProtocolProfile, device: DeviceKind = 'pressure'): LineClassifier {
  const decode = createLineDecoder(profile);
  return (line) => {
    const decoded = decode(line);
    if (decoded.ok) return { type: 'sample', sample: { device, raw: line, value: decoded.value, unit: decoded.unit } };
    return { type: 'rejected', raw: line, reason: decoded.reason, ...(decoded.detail ? { detail: decoded.detail } : {}) };
  };
}

/**
 * Frames and classifies a device's bytes. {@link ProtocolDecoder.push} never throws: framing
 * drops go to `onDrop` and `stats.framer`, rejected lines are returned as `rejected` frames and
 * counted in `stats.rejected`.
 */
export class ProtocolDecoder {
  private readonly framer: LineFramer;
  private readonly classify: LineClassifier;
  readonly stats: ProtocolDecoderStats;

  constructor(classify: LineClassifier, framing: LineFramerOptions = {}, onDrop?: (line: DroppedLine) => void) {
    this.framer = new LineFramer(framing, onDrop);
    this.classify = classify;
    this.stats = { framer: this.framer.stats, samples: 0, texts: 0, rejected: emptyRejectCounts() };
  }

  /** Feeds a chunk; returns the frames of the lines it completed, in order. */
  push(chunk: Uint8Array | string): ProtocolFrame[] {
    const frames: ProtocolFrame[] = [];
    for (const line of this.framer.push(chunk)) {
      let frame: ProtocolFrame;
      try {
        frame = this.classify(line);
      } catch {
        // A user-supplied classifier must not take the port down; treat its failure as no match.
        frame = { type: 'rejected', raw: line, reason: 'no-match' };
      }
      if (frame.type === 'sample') this.stats.samples += 1;
      else if (frame.type === 'text') this.stats.texts += 1;
      else this.stats.rejected[frame.reason] += 1;
      frames.push(frame);
    }
    return frames;
  }

  /** Forgets a partial line (after a reconnect). */
  reset(): void {
    this.framer.reset();
  }
}
