/** Protocol drivers: framing, command queue, timeouts and decoding per instrument protocol. */
export * from './command-queue';
export * from './driver-base';
export * from './line/line-calibrator-driver';
export * from './poller';
export * from './protocol-parser';
export * from './scpi/scpi-meter-driver';
export * from './hart/hart-errors';
export * from './hart/hart-link';
export * from './hart/hart-master-driver';
