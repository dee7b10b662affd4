/**
 * The HART link on a hand-driven port (no module mock): a half-duplex modem's echo of our own
 * request is not a reply, nor is a reply to another command or another device. Frames are literal
 * bytes (layout from memory of HCF_SPEC-081; checksums recomputed by hand).
 */
import { describe, expect, it } from 'vitest';
import { HandPort } from '../../../../tests/helpers/hand-port';
import { HartLink } from './hart-link';
import { HartPortError, HartTimeoutError } from './hart-errors';

const hex = (text: string): Uint8Array => Uint8Array.from(text.split(' '), (b) => parseInt(b, 16));

/** Echoes every write (as some modems do) and then plays the scripted answers. */
class EchoingPort extends HandPort {
  readonly written: Uint8Array[] = [];
  answers: string[] = [];
  constructor() {
    super('/dev/ttyHART0');
  }
  async write(data: string | Uint8Array): Promise<void> {
    const bytes = typeof data === 'string' ? new TextEncoder().encode(data) : data;
    this.written.push(bytes);
    setImmediate(() => {
      this.feed(bytes);
      for (const a of this.answers.splice(0)) this.feed(hex(a));
    });
  }
}

const POLL0 = { type: 'short', master: 'primary', burst: false, pollingAddress: 0 } as const;

describe('HartLink', () => {
  it('ignores its own echo, a reply to another command and one from another device, then takes the right reply', async () => {
    const port = new EchoingPort();
    port.answers = [
      'FF FF FF FF FF 06 80 01 02 00 00 85', // command 1 from address 0: not ours
      'FF FF FF FF FF 06 81 00 02 00 00 85', // command 0 from polling address 1: not ours
      'FF FF FF FF FF 06 80 00 02 00 00 84', // ours: command 0, address 0, response code 0
    ];
    const link = new HartLink(port, { timeoutMs: 200, retries: 0 });
    const exchange = await link.transact(POLL0, 0, new Uint8Array(0));
    expect(exchange.frame).toMatchObject({ kind: 'response', command: 0, status: { responseCode: 0, deviceStatus: 0 } });
    expect(port.written.map((w) => Array.from(w))).toEqual([Array.from(hex('FF FF FF FF FF 02 80 00 00 82'))]);
    expect(link.stats).toMatchObject({ sent: 1, replied: 1, timeouts: 0 });
    link.close();
  });

  it('times out naming the command, the port and the attempts, and fails a waiting request on disconnect', async () => {
    const port = new EchoingPort();
    const link = new HartLink(port, { timeoutMs: 50, retries: 1 });
    const error = await link.transact(POLL0, 0, new Uint8Array(0)).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(HartTimeoutError);
    expect((error as Error).message).toBe('HART command 0 (read unique identifier) on /dev/ttyHART0: no reply in 50 ms (2 attempts)');
    const waiting = link.transact(POLL0, 0, new Uint8Array(0), 5_000);
    setTimeout(() => port.disconnect(), 10);
    await expect(waiting).rejects.toBeInstanceOf(HartPortError);
    await expect(link.transact(POLL0, 0, new Uint8Array(0))).rejects.toThrow('HART command 0 (read unique identifier) on /dev/ttyHART0: port not connected');
    link.close();
  });
});
