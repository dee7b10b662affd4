import { afterEach, describe, expect, it, vi } from 'vitest';
import { classifyScpiMeterLine } from '../../../shared/protocol';
import { HandPort } from '../../../tests/helpers/hand-port';
import { BadReplyError, CommandQueue, CommandTimeoutError, PortUnavailableError } from './command-queue';
import { ProtocolParser } from './protocol-parser';

/** A hand-driven port: records writes, lets the test answer. */
class ScriptedPort extends HandPort {
  readonly written: string[] = [];
  constructor() {
    super('/dev/ttyUSB0');
  }
  async write(data: string | Uint8Array): Promise<void> {
    this.written.push(String(data));
  }
}

function setup(): { port: ScriptedPort; parser: ProtocolParser; queue: CommandQueue } {
  const port = new ScriptedPort();
  const parser = new ProtocolParser(classifyScpiMeterLine);
  const queue = new CommandQueue(port, parser);
  return { port, parser, queue };
}

const flush = (): Promise<void> => new Promise((r) => setImmediate(r));

describe('CommandQueue', () => {
  afterEach(() => vi.useRealTimers());

  it('keeps one command outstanding and answers in FIFO order', async () => {
    const { port, parser, queue } = setup();
    const a = queue.send('READ?', { expect: 'sample' });
    const b = queue.send('*IDN?', { expect: 'text' });
    await flush();
    expect(port.written).toEqual(['READ?\n']);
    parser.write('+1.000000E-02\n');
    await expect(a).resolves.toMatchObject({ type: 'sample', sample: { value: 10 } });
    await flush();
    expect(port.written).toEqual(['READ?\n', '*IDN?\n']);
    parser.write('A,B,C,D\n');
    await expect(b).resolves.toEqual({ type: 'text', raw: 'A,B,C,D' });
    expect(queue.depth).toBe(0);
  });

  it('times out with a message naming command, port and time', async () => {
    vi.useFakeTimers();
    const { queue } = setup();
    const pending = queue.send('READ?', { expect: 'sample' });
    const caught = pending.catch((e: unknown) => e);
    await vi.advanceTimersByTimeAsync(1999);
    await vi.advanceTimersByTimeAsync(1);
    const error = await caught;
    expect(error).toBeInstanceOf(CommandTimeoutError);
    expect((error as Error).message).toBe('READ? on /dev/ttyUSB0: no reply in 2000 ms');
    expect(queue.stats.timeouts).toBe(1);
  });

  it('fails fast on a rejected reply and ignores replies of the wrong kind', async () => {
    const { parser, queue } = setup();
    const read = queue.send('READ?', { expect: 'sample' });
    await flush();
    parser.write('X,Y,Z,W\n');
    parser.write('OVLD\n');
    await expect(read).rejects.toBeInstanceOf(BadReplyError);
    expect(queue.stats).toMatchObject({ badReplies: 1, unsolicited: 1 });
    parser.write('+1.0E-02\n');
    expect(queue.stats.unsolicited).toBe(2);
  });

  it('fails the waiting and queued commands on disconnect, and refuses new ones', async () => {
    const { port, queue } = setup();
    const a = queue.send('READ?', { expect: 'sample' });
    const b = queue.send('READ?', { expect: 'sample' });
    port.disconnect();
    await expect(a).rejects.toThrow('READ? on /dev/ttyUSB0: port disconnected');
    await expect(b).rejects.toBeInstanceOf(PortUnavailableError);
    await expect(queue.send('READ?', { expect: 'sample' })).rejects.toThrow('READ? on /dev/ttyUSB0: port not connected');
  });
});
