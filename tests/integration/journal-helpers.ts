import type { JournalRow } from '../../server/bench/journal';

/** A journaled line of bench-1's current device as the port gave it (not decoded: no value, no unit, no run). */
export function portRow(seq: number, raw: string, wallMs: number): JournalRow {
  return {
    seq,
    benchId: 'bench-1',
    device: 'current',
    runId: null,
    raw,
    value: null,
    unit: null,
    wallMs,
    monoMs: seq,
    sourceKind: 'port',
    sourceId: 'bench-1',
    clientWallMs: null,
  };
}
