/** The operating system's serial binding (native `@serialport/bindings-cpp`, chosen per platform). */
import { SerialPort } from 'serialport';
import type { BindingInterface } from './binding-types';

/** The real serial binding for this platform, as `serialport` auto-detects it. */
export function defaultBinding(): BindingInterface {
  return SerialPort.binding as unknown as BindingInterface;
}
