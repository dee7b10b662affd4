/**
 * The production server prebuilt into one ES module (esbuild, the compiler tsx itself runs on), for
 * the suites that start it as a child process over and over (proofs, SIGKILL restarts, benches):
 * `node bundle/main.mjs` starts in a fraction of the time `node --import tsx server/main.ts` takes,
 * which resolves and compiles every module through loader hooks at each start. The code is the
 * same: packages stay external (loaded from node_modules as the source does), and each module keeps
 * its own directory (`import.meta.dirname`), so the migrations and the client build are found where
 * the source finds them. The PGlite worker is bundled beside it (server/db/pglite-worker-client.ts
 * starts `pglite-worker.mjs` when it runs from such a bundle).
 *
 * Built once per content of the server's sources into `.tmp/server-bundle/<hash>/` (a rename makes
 * it appear whole, so parallel test processes may race to build it).
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { build, type Plugin } from 'esbuild';

const root = path.resolve(import.meta.dirname, '../..');
const SOURCES = ['server', 'shared', 'simulators'];

/**
 * The lint-boundaries suite writes short-lived probe files into `server/lint-probe-<pid>/` and
 * `shared/lint-probe-<pid>/` (a path-based rule only applies where the file lives) while other lanes
 * build this bundle: they are not server sources, and may vanish between listing and reading.
 */
const LINT_PROBE = /^lint-probe-/;

function sourceFiles(dir: string): string[] {
  return fs
    .readdirSync(path.join(root, dir), { withFileTypes: true })
    .sort((a, b) => a.name.localeCompare(b.name))
    .flatMap((e) => {
      const rel = path.join(dir, e.name);
      if (e.isDirectory()) return LINT_PROBE.test(e.name) ? [] : sourceFiles(rel);
      return /\.tsx?$/.test(e.name) && !/\.test\.tsx?$/.test(e.name) ? [rel] : [];
    });
}

/** Replaces `import.meta.dirname` in each module with that module's own directory in the source tree. */
const keepModuleDirs: Plugin = {
  name: 'keep-module-dirs',
  setup(build) {
    build.onLoad({ filter: /\.tsx?$/ }, (args) => {
      const text = fs.readFileSync(args.path, 'utf8');
      if (!text.includes('import.meta.dirname')) return undefined;
      return { contents: text.replaceAll('import.meta.dirname', JSON.stringify(path.dirname(args.path))), loader: args.path.endsWith('x') ? 'tsx' : 'ts' };
    });
  },
};

let built: Promise<string> | undefined;

/** Path of the bundled `server/main.ts` (building it first when the sources changed). */
export function serverBundle(): Promise<string> {
  return (built ??= buildBundle());
}

/** The source files the bundle's content hash covers (relative to the repository). */
export function bundleSources(): string[] {
  return SOURCES.flatMap(sourceFiles);
}

async function buildBundle(): Promise<string> {
  const h = createHash('sha256');
  for (const f of bundleSources()) h.update(f).update('\0').update(fs.readFileSync(path.join(root, f)));
  const dir = path.join(root, '.tmp', 'server-bundle', h.digest('hex').slice(0, 16));
  const main = path.join(dir, 'main.mjs');
  if (!fs.existsSync(main)) {
    const tmp = `${dir}.${process.pid}.tmp`;
    fs.rmSync(tmp, { recursive: true, force: true });
    await build({
      entryPoints: { main: path.join(root, 'server/main.ts'), 'pglite-worker': path.join(root, 'server/db/pglite-worker.ts') },
      outdir: tmp,
      outExtension: { '.js': '.mjs' },
      bundle: true,
      platform: 'node',
      format: 'esm',
      target: 'node20',
      packages: 'external',
      logLevel: 'error',
      plugins: [keepModuleDirs],
    });
    try {
      fs.renameSync(tmp, dir);
    } catch (e) {
      // Another process built the same sources first: use theirs.
      fs.rmSync(tmp, { recursive: true, force: true });
      if (!fs.existsSync(main)) throw e;
    }
  }
  return main;
}
