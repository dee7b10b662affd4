/** Serial transport: the only place that talks to `serialport`. */
export * from './default-binding';
export * from './device-port';
export * from './list-ports';
export * from './managed-port';
export type * from './binding-types';
