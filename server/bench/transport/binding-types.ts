/**
 * Types of the serialport binding interface. Imported through the `require` resolution mode
 * because the package's `exports` map has no `types` condition: under Bundler resolution its ESM
 * entry has no declarations, while the CommonJS entry sits beside `index.d.ts`.
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
