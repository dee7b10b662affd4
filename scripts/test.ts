/**
 * The test tiers, each in lanes that run at the same time:
 * - `npm test` (the default tier): lint, types, unit, integration, end-to-end in Chromium and the
 *   request-level security suites of tests/proof/ (they have no rounds to shorten);
 * - `npm run test:proof` (`--tier proof`): the full proofs (PROOF_LEVEL=full), the agent's
 *   ten-minute outage in a lane of its own beside the others; `--tier proof-short`: every proof at
 *   its short level (5 kills, 15 s of load), a few minutes for a change to the capture path;
 * - `npm run test:postgres` (`--tier postgres`, under scripts/with-postgres.sh): the integration
 *   suites that touch the database and the short proofs, on a PostgreSQL server;
 * - `--tier ci` (`.ci/run`, under scripts/with-postgres.sh): the full proofs (but the security
 *   suites `npm test` already ran), and the PostgreSQL pass once the proof lane is done, beside the
 *   outage.
 *
 * The suites that wait on the real clock (captures with their holds, Chromium, server processes
 * killed and restarted) spend most of their time idle, so each runs in a lane beside the others
 * instead of after them; inside a lane the files run one or two at a time, as vitest.config.ts says. Each
 * lane's output is printed with its name in front; at the end a table gives each lane's time and
 * result, and the exit code is non-zero when any lane failed. `--lanes a,b` runs only those lanes.
 */
import { spawn } from 'node:child_process';
import os from 'node:os';
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '..');
const bin = (name: string) => path.join(root, 'node_modules', '.bin', name);

interface Lane {
  name: string;
  /** Commands run one after the other; the lane fails at the first that fails. */
  steps: string[][];
  /** Lanes that must finish first. */
  after?: string[];
  /** Environment of the lane's commands. */
  env?: Record<string, string>;
  /**
   * CPU-bound work (lint, types, unit tests) runs at a lower priority (nice 10): it fills the time
   * the clock-bound suites leave idle, and does not hold up a server boot or a hold on the rig.
   */
  background?: boolean;
}

const vitest = (...args: string[]) => [bin('vitest'), 'run', ...args];
/**
 * Type-checks one project incrementally: tsc keeps what it learnt (diagnostics included) in
 * `.tmp/tsc/` and re-checks only what a change can affect, so a second `npm test` spends seconds
 * here instead of minutes. A clean clone checks everything.
 */
const tsc = (project: 'app' | 'node') => [bin('tsc'), '-p', `tsconfig.${project}.json`, '--incremental', '--tsBuildInfoFile', `.tmp/tsc/${project}.tsbuildinfo`];
const projects = (...names: string[]) => names.flatMap((p) => ['--project', p]);

/** Integration suites that never open a database (lint, wiring, serial drivers): left out of the PostgreSQL pass. */
const NO_DATABASE = ['composition-root', 'lint-boundaries', 'serial-driver-pty', 'serial-driver-sim', 'serial-faults'].flatMap((f) => ['--exclude', `tests/integration/${f}.test.ts`]);
/** Suites of one storage only, left out of the other's pass (they say so by skipping when run there by hand). */
const PGLITE_ONLY = ['data-dir-lock', 'mail-schedule'].flatMap((f) => ['--exclude', `tests/integration/${f}.test.ts`]);
const POSTGRES_ONLY = ['database-lock'].flatMap((f) => ['--exclude', `tests/integration/${f}.test.ts`]);
const OUTAGE = 'tests/proof/agent-outage.test.ts';
/**
 * The proofs that send requests and read answers (the attacker's probes): no rounds, no kills, no
 * clock, so they belong in every `npm test`. The other proofs (SIGKILL restarts, fuzz, load, the
 * outage, a first start) run in `.ci/run` and `npm run test:proof`.
 */
const SECURITY = ['tests/proof/security.test.ts', 'tests/proof/security-requests.test.ts'];

/**
 * The lint-boundaries suite lints probe files (CPU work, no server, no clock): it runs in the lint
 * lane after `eslint .`, at that lane's low priority, instead of taking one of the integration
 * lane's two file slots from the suites that wait on the rig.
 */
const LINT_SUITE = 'tests/integration/lint-boundaries.test.ts';

const TIERS: Record<string, Lane[]> = {
  test: [
    { name: 'lint', steps: [[bin('eslint'), '.'], vitest(...projects('integration'), LINT_SUITE)], background: true },
    { name: 'types', steps: [tsc('app'), tsc('node')], background: true },
    { name: 'unit', steps: [vitest(...projects('shared', 'shared-dom', 'server', 'client'))], background: true },
    { name: 'integration', steps: [vitest(...projects('integration'), '--exclude', LINT_SUITE, ...POSTGRES_ONLY)] },
    { name: 'e2e', steps: [vitest(...projects('e2e'))] },
    { name: 'security', steps: [vitest(...projects('proof'), ...SECURITY)] },
  ],
  proof: [
    { name: 'proof', steps: [vitest(...projects('proof'), '--exclude', OUTAGE)], env: { PROOF_LEVEL: 'full' } },
    { name: 'outage', steps: [vitest(...projects('proof'), OUTAGE)], env: { PROOF_LEVEL: 'full' } },
  ],
  'proof-short': [{ name: 'proof', steps: [vitest(...projects('proof'))] }],
  postgres: [
    { name: 'integration', steps: [vitest(...projects('integration'), ...NO_DATABASE, ...PGLITE_ONLY)] },
    { name: 'proof', steps: [vitest(...projects('proof'))] },
  ],
  /**
   * What `.ci/run` runs after `npm test`, under scripts/with-postgres.sh: the full proofs on PGlite
   * (TEST_DATABASE_URL emptied for them), then the PostgreSQL pass as soon as the proof lane is done,
   * while the ten-minute outage (a lane that mostly waits) still runs beside it. The load proof
   * still has the machine to itself but for the outage, and the PostgreSQL pass no longer waits
   * for the outage to end.
   */
  ci: [
    {
      name: 'proof',
      steps: [vitest(...projects('proof'), '--exclude', OUTAGE, ...SECURITY.flatMap((f) => ['--exclude', f]))],
      env: { PROOF_LEVEL: 'full', TEST_DATABASE_URL: '' },
    },
    { name: 'outage', steps: [vitest(...projects('proof'), OUTAGE)], env: { PROOF_LEVEL: 'full', TEST_DATABASE_URL: '' } },
    { name: 'pg-integration', steps: [vitest(...projects('integration'), ...NO_DATABASE, ...PGLITE_ONLY)], after: ['proof'] },
    { name: 'pg-proof', steps: [vitest(...projects('proof'))], after: ['proof'] },
  ],
};

function arg(name: string): string | undefined {
  const i = process.argv.indexOf(name);
  return i < 0 ? undefined : process.argv[i + 1];
}

const tier = arg('--tier') ?? 'test';
if (!TIERS[tier]) {
  console.error(`--tier takes one of ${Object.keys(TIERS).join(', ')}`);
  process.exit(2);
}
if ((tier === 'postgres' || tier === 'ci') && !process.env.TEST_DATABASE_URL) {
  console.error(`--tier ${tier} needs TEST_DATABASE_URL: run it under scripts/with-postgres.sh (\`npm run test:postgres\` does), which starts the server`);
  process.exit(2);
}
const LANES = TIERS[tier]!;

function pick(): Lane[] {
  const list = arg('--lanes');
  if (list === undefined) return LANES;
  const names = list.split(',').filter(Boolean);
  const unknown = names.filter((n) => !LANES.some((l) => l.name === n));
  if (unknown.length || !names.length) {
    console.error(`--lanes takes a comma-separated list of ${LANES.map((l) => l.name).join(', ')}${unknown.length ? `; unknown: ${unknown.join(', ')}` : ''}`);
    process.exit(2);
  }
  return LANES.filter((l) => names.includes(l.name)).map((l) => ({ ...l, after: l.after?.filter((a) => names.includes(a)) }));
}

/** Process groups of the running commands: stopping `npm test` stops them and everything they started. */
const groups = new Set<number>();
for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
  process.once(signal, () => {
    for (const g of groups) {
      try {
        process.kill(-g, 'SIGKILL');
      } catch {
        /* already gone */
      }
    }
    process.exit(130);
  });
}

/**
 * CPU seconds (user + system) of each lane's commands and everything they started and waited for
 * (vitest workers, server processes, Chromium): the shell's `times` after the command, on a line of
 * its own that is read here and not printed. Wall time on a shared two-core machine says how busy
 * it was; these say what each lane costs.
 */
const cpu = new Map<string, number>();
const TIMES = /^(\d+)m([\d.]+)s (\d+)m([\d.]+)s$/;

/** Runs one command in a process group of its own, printing each line of its output with the lane's name in front. */
function run(lane: string, argv: string[], env: Record<string, string> = {}, background = false): Promise<number> {
  return new Promise((resolve) => {
    const cmd = ['sh', '-c', '"$@"; c=$?; times >&2; exit $c', 'sh', ...(background ? ['nice', '-n', '10', ...argv] : argv)];
    const child = spawn(cmd[0]!, cmd.slice(1), {
      cwd: root,
      env: { ...process.env, ...(process.stdout.isTTY ? { FORCE_COLOR: '1' } : { NO_COLOR: '1' }), ...env },
      stdio: ['ignore', 'pipe', 'pipe'],
      detached: true,
    });
    if (child.pid) groups.add(child.pid);
    const tag = `[${lane}]`.padEnd(14);
    for (const stream of [child.stdout, child.stderr]) {
      let rest = '';
      stream.setEncoding('utf8');
      stream.on('data', (d: string) => {
        const lines = (rest + d).split('\n');
        rest = lines.pop()!;
        for (const l of lines) {
          const t = stream === child.stderr ? TIMES.exec(l) : null;
          if (t) cpu.set(lane, (cpu.get(lane) ?? 0) + Number(t[1]) * 60 + Number(t[2]) + Number(t[3]) * 60 + Number(t[4]));
          else process.stdout.write(`${tag}${l}\n`);
        }
      });
      stream.on('end', () => rest && process.stdout.write(`${tag}${rest}\n`));
    }
    child.on('error', (e) => {
      process.stdout.write(`${tag}could not start ${argv[0]}: ${e.message}\n`);
      resolve(127);
    });
    child.on('close', (code, signal) => {
      if (child.pid) groups.delete(child.pid);
      resolve(code ?? (signal ? 128 : 1));
    });
  });
}

const lanes = pick();
const t0 = performance.now();
// What the suites share (the seeded template database, the server bundle), made once before the lanes start.
if (lanes.some((l) => l.steps.some((s) => s[0] === bin('vitest'))) && (await run('prepare', [bin('tsx'), 'tests/helpers/prepare.ts'])) !== 0) process.exit(1);
const results = new Map<string, { code: number; seconds: number }>();
const done = new Map<string, Promise<number>>();
for (const lane of lanes) {
  done.set(
    lane.name,
    (async () => {
      for (const a of lane.after ?? []) await done.get(a);
      const start = performance.now();
      let code = 0;
      for (const step of lane.steps) if ((code = await run(lane.name, step, lane.env, lane.background)) !== 0) break;
      results.set(lane.name, { code, seconds: (performance.now() - start) / 1000 });
      return code;
    })(),
  );
}
await Promise.all(done.values());
const total = (performance.now() - t0) / 1000;
console.log('');
console.table(lanes.map((l) => ({ lane: l.name, seconds: Math.round(results.get(l.name)!.seconds), 'CPU-s': Math.round(cpu.get(l.name) ?? 0), result: results.get(l.name)!.code === 0 ? 'passed' : `FAILED (exit ${results.get(l.name)!.code})` })));
const cpuTotal = [...cpu.values()].reduce((a, b) => a + b, 0);
console.log(`${tier} tier: ${Math.round(total)} s in all, ${Math.round(cpuTotal)} CPU-s (prepare included) on ${os.availableParallelism()} cores (load average ${os.loadavg().map((x) => x.toFixed(1)).join(' ')})`);
process.exit([...results.values()].some((r) => r.code !== 0) ? 1 : 0);
