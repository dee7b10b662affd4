/** What every benchmark reports, and how a bench file knows it was run on its own. */
import { pathToFileURL } from 'node:url';

/** One benchmark figure. */
export interface BenchFigure {
  name: string;
  value: number;
  unit: string;
  target?: string;
  ok?: boolean;
}

/** True when the module at `moduleUrl` (its `import.meta.url`) is the script node was started with. */
export function isMainModule(moduleUrl: string): boolean {
  return process.argv[1] !== undefined && moduleUrl === pathToFileURL(process.argv[1]).href;
}
