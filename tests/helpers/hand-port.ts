/** A hand-driven port for driver unit tests: the test feeds the device's bytes and pulls the cable itself. Not a module mock. */
import { EventEmitter } from 'node:events';
import type { DevicePort, PortStatusEvent } from '../../server/bench/transport/device-port';

export abstract class HandPort implements DevicePort {
  connected = true;
  private readonly events = new EventEmitter();

  constructor(readonly path: string) {}

  abstract write(data: string | Uint8Array): Promise<void>;

  onData(listener: (chunk: Uint8Array) => void): () => void {
    this.events.on('data', listener);
    return () => this.events.off('data', listener);
  }

  onStatus(listener: (event: PortStatusEvent) => void): () => void {
    this.events.on('status', listener);
    return () => this.events.off('status', listener);
  }

  /** Bytes arriving from the device. */
  feed(bytes: Uint8Array): void {
    this.events.emit('data', bytes);
  }

  /** The cable is pulled. */
  disconnect(): void {
    this.connected = false;
    this.events.emit('status', { type: 'device.disconnected', path: this.path, at: 0, reason: 'unplugged' });
  }
}
