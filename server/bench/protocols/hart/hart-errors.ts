/**
 * Typed failures of HART transactions. Every message names the command, its name in words and the
 * port: `HART command 3 (read dynamic variables and loop current) on /dev/ttyUSB0: no reply in 1000 ms (3 attempts)`.
 */
import { commandLabel, describeDeviceStatus, describeResponseCode } from '../../../../shared/protocol/hart';

/** What every HART failure carries. */
export abstract class HartError extends Error {
  abstract readonly code: string;
  constructor(
    readonly command: number,
    readonly path: string,
    detail: string,
  ) {
    super(`HART ${commandLabel(command)} on ${path}: ${detail}`);
    this.name = new.target.name;
  }
}

/** No reply on any attempt. */
export class HartTimeoutError extends HartError {
  readonly code = 'hart-timeout';
  constructor(command: number, path: string, readonly timeoutMs: number, readonly attempts: number) {
    super(command, path, `no reply in ${timeoutMs} ms (${attempts} ${attempts === 1 ? 'attempt' : 'attempts'})`);
  }
}

/** Replies came back but none passed its checksum. */
export class HartChecksumError extends HartError {
  readonly code = 'hart-checksum';
  constructor(command: number, path: string, readonly attempts: number) {
    super(command, path, `the reply failed its checksum on every attempt (${attempts})`);
  }
}

/** The device said it heard a damaged request (top bit of the first status byte) on every attempt. */
export class HartCommunicationError extends HartError {
  readonly code = 'hart-communication';
  constructor(command: number, path: string, readonly responseCode: number) {
    super(command, path, `the device reported a ${describeResponseCode(responseCode)}`);
  }
}

/** The device answered with a response code that is not success. */
export class HartResponseError extends HartError {
  readonly code: string = 'hart-response';
  constructor(command: number, path: string, readonly responseCode: number, readonly deviceStatus: number) {
    const status = describeDeviceStatus(deviceStatus);
    super(command, path, `the device answered "${describeResponseCode(responseCode, command)}" (response code ${responseCode})${status.length > 0 ? `; status: ${status.join(', ')}` : ''}`);
  }
}

/** Response code 7: the device is write protected. */
export class HartWriteProtectedError extends HartResponseError {
  override readonly code = 'hart-write-protected';
}

/** Response code 32 (busy) or a delayed response still running after every retry. */
export class HartBusyError extends HartResponseError {
  override readonly code = 'hart-busy';
}

/** A reply whose data is too short for the command's fields. */
export class HartBadReplyError extends HartError {
  readonly code = 'hart-bad-reply';
  constructor(command: number, path: string, readonly dataLength: number) {
    super(command, path, `the reply's ${dataLength} data bytes do not hold the command's fields`);
  }
}

/** The port is not there, a write or the RTS keying failed, or the driver was closed. */
export class HartPortError extends HartError {
  readonly code = 'hart-port';
}
