/**
 * Types of the serialport binding interface, through the `require` resolution mode because the
 * package's `exports` map has no `types` condition (its CommonJS entry sits beside `index.d.ts`).
 */
export type {
  BindingInterface,
  BindingPortInterface,
  BindingsErrorInterface,
  OpenOptions,
  PortInfo,
  PortStatus,
  SetOptions,
  UpdateOptions,
} from '@serialport/bindings-interface' with { 'resolution-mode': 'require' };
