/**
 * Client → server messages on `/ws` (shared/schemas/stream.ts `ClientMessageSchema`): parsing,
 * and the handing of forwarded instrument lines to the forward service, which decides who may feed
 * what and answers `lines.acked`. Anything that does not parse is ignored.
 */
import type { RawData } from 'ws';
import { ClientMessageSchema, type ClientMessage } from '../../shared/schemas/stream';
import type { ForwardReply, ForwardService } from '../services/forward.service';
import type { StreamPrincipal } from './upgrade-auth';

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

/** Forwarded instrument lines: the forward service checks the sender, stores the batch once and acknowledges it. */
export function handleForwarded(principal: StreamPrincipal, m: Extract<ClientMessage, { type: 'lines.forwarded' }>, forward: ForwardService, reply: ForwardReply): { lines: number } {
  forward.handle(principal, m, reply);
  return { lines: m.lines.length };
}
