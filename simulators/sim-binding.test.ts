import { SerialPortStream } from '@serialport/stream';
import { describe, expect, it } from 'vitest';
import { createSimBinding } from './sim-binding';
import { ScpiMeterEmulator } from './scpi-meter-emulator';

function open(stream: SerialPortStream): Promise<void> {
  return new Promise((resolve, reject) => stream.open((e) => (e ? reject(e) : resolve())));
}

describe('simulator serialport binding', () => {
  it('works under a real SerialPortStream and reports a pulled cable as a disconnect', async () => {
    const binding = createSimBinding();
    const meter = new ScpiMeterEmulator({ readCurrentMa: () => 12, latencyMs: 1 });
    binding.attach('/dev/sim-dmm', meter);
    expect((await binding.list()).map((p) => p.path)).toEqual(['/dev/sim-dmm']);

    const stream = new SerialPortStream({ binding, path: '/dev/sim-dmm', baudRate: 9600, autoOpen: false });
    await open(stream);
    const reply = new Promise<string>((resolve) => stream.once('data', (d: Buffer) => resolve(d.toString())));
    stream.write('*IDN?\n');
    expect(await reply).toBe('STILLPOINT,SIM-DMM,0001,1.0\n');

    const closed = new Promise<Error | null>((resolve) => stream.once('close', resolve));
    binding.unplug('/dev/sim-dmm');
    const error = await closed;
    expect(error).toMatchObject({ disconnected: true });
    expect(await binding.list()).toEqual([]);
    await expect(open(new SerialPortStream({ binding, path: '/dev/sim-dmm', baudRate: 9600, autoOpen: false }))).rejects.toThrow(
      /No such file or directory/,
    );

    binding.replug('/dev/sim-dmm');
    const again = new SerialPortStream({ binding, path: '/dev/sim-dmm', baudRate: 9600, autoOpen: false });
    await open(again);
    await expect(open(new SerialPortStream({ binding, path: '/dev/sim-dmm', baudRate: 9600, autoOpen: false }))).rejects.toThrow(/lock/);
    await new Promise<void>((resolve) => again.close(() => resolve()));
  });
});
