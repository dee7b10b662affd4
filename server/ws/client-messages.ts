/**
 * Browser → server messages on `/ws` (shared/schemas/stream.ts `ClientMessageSchema`): parsing,
 * and the handling of forwarded instrument lines. Anything that does not parse is ignored.
 */
import type { RawData } from 'ws';
import { ClientMessageSchema, type ClientMessage } from '../../shared/schemas/stream';
import { allows } from '../http/policy';
import type { SessionUser } from '../services/auth.service';
import type { BenchService } from '../services/bench.service';

/** Parses one text frame; undefined for binary, non-JSON or off-contract messages. */
export function parseClientMessage(data: RawData, isBinary: boolean): ClientMessage | undefined {
  if (isBinary) return undefined;
  try {
    const parsed = ClientMessageSchema.safeParse(JSON.parse(String(data)));
    return parsed.success ? parsed.data : undefined;
  } catch {
    return undefined;
  }
}

/** Forwarded instrument lines feed the hub like a port: only roles that perform calibrations may do it. */
export function handleForwarded(user: SessionUser, m: Extract<ClientMessage, { type: 'lines.forwarded' }>, bench: BenchService): { lines: number } {
  if (!allows('jobs.perform', user.role)) return { lines: 0 };
  bench.ingestForwarded(m);
  return { lines: m.lines.length };
}
