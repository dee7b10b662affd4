/**
 * What protocol drivers need from a serial port: write bytes, receive bytes, and hear about
 * connects and disconnects. {@link ManagedPort} provides it over `serialport`.
 */

/** Emitted when a port (re)opens. Same name as the WebSocket message type. */
export interface DeviceConnectedEvent {
  path: string;
  /** Wall-clock time, ms since the epoch. */
  at: number;
  /** 1 for the first connection, then one more per reconnect. */
  connection: number;
  /** Time from the disconnect to this reconnect in ms; absent on the first connection. */
  downtimeMs?: number;
}

/** Emitted when an open port is lost (unplugged, device powered off, pty closed). */
export interface DeviceDisconnectedEvent {
  path: string;
  /** Wall-clock time, ms since the epoch. */
  at: number;
  /** The error that ended the connection, as text. */
  reason: string;
}

/** Port status change, as delivered to {@link DevicePort.onStatus} listeners. */
export type PortStatusEvent =
  | ({ type: 'device.connected' } & DeviceConnectedEvent)
  | ({ type: 'device.disconnected' } & DeviceDisconnectedEvent);

/** A byte pipe to one instrument that may come and go. */
export interface DevicePort {
  /** The path the port was opened with, e.g. `/dev/ttyUSB0`; used in error messages. */
  readonly path: string;
  /** True while the port is open and usable. */
  readonly connected: boolean;
  /** Writes bytes; rejects when the port is not connected or the write fails. */
  write(data: string | Uint8Array): Promise<void>;
  /** Subscribes to received bytes; returns the unsubscribe function. */
  onData(listener: (chunk: Uint8Array) => void): () => void;
  /** Subscribes to connect / disconnect; returns the unsubscribe function. */
  onStatus(listener: (event: PortStatusEvent) => void): () => void;
  /** Sets modem control lines (RTS keys the carrier of an RS-232 HART modem). Absent on ports that cannot. */
  setControlLines?(lines: { rts?: boolean; dtr?: boolean }): Promise<void>;
}
