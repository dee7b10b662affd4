import { z } from 'zod';

const EnvSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  /**
   * Address to listen on. Unset: the loopback address (127.0.0.1), so a fresh install with the demo
   * users is not reachable from the network; set it (e.g. 0.0.0.0) to serve a plant network.
   */
  HOST: z.string().min(1).optional(),
  /**
   * Express `trust proxy`: which proxies' X-Forwarded-For / -Proto to believe ('loopback', an
   * address or subnet list, or a hop count). Unset: none are believed, so a client cannot choose
   * the address the sign-in throttle sees.
   */
  TRUST_PROXY: z.string().min(1).optional(),
  /** Most requests served at once; past the limit in force new ones wait briefly for a turn or get 503 with Retry-After (0 turns shedding off). */
  MAX_IN_FLIGHT: z.coerce.number().int().min(0).max(100_000).default(48),
  /**
   * Latency the served requests are held to, ms: the limit in force starts at SHED_MIN_IN_FLIGHT and climbs towards
   * MAX_IN_FLIGHT while requests take less once started, and falls while they take longer; a
   * request past it waits up to this long for a turn while the queue has lately been empty, 5 ms
   * while it has stood longer (controlled delay), then gets 503. 0 keeps the limit at MAX_IN_FLIGHT
   * with no waiting. A quarter of the 200 ms p99 the shedding benchmark asks for: the tail of the
   * served requests runs to several times the time the limit is steered by (our own figure; 100
   * gave a p99 at 200 req/s of 540–575 ms where 50 gave 140–470 ms, in one run, 2026-12-03).
   */
  SHED_TARGET_MS: z.coerce.number().int().min(0).max(60_000).default(50),
  /** The adaptive in-flight limit never goes below this: on a machine busy with other work a floor of 2 served ~14 req/s (2026-12-03 bench). */
  SHED_MIN_IN_FLIGHT: z.coerce.number().int().min(1).max(10_000).default(16),
  /**
   * Nice value of the PGlite database thread (0–19; 0: the process's own priority). A higher value
   * lets the main thread (the live path) win the CPU over a long review query when the cores are
   * oversubscribed, but it also lets every other program on the machine win it: on a shared two-core
   * machine at load average 22–24 the database thread at nice 10 served fewer requests at a higher
   * p99 than at 0 at each of 100, 150 and 200 req/s (perf/shedding.bench.ts, one run, 2026-12-03).
   */
  DB_THREAD_NICE: z.coerce.number().int().min(0).max(19).default(0),
  /** Where PGlite keeps its files, the lock, the signing secret, the sample journal and uploads. */
  DATA_DIR: z.string().min(1).default('./data'),
  /** A postgres:// URL switches storage to a PostgreSQL server; unset means embedded PGlite. */
  DATABASE_URL: z
    .string()
    .regex(/^postgres(ql)?:\/\//, 'DATABASE_URL must be a postgres:// URL')
    .optional(),
  BENCH: z.enum(['sim', 'serial']).default('sim'),
  /** Serial ports of the local bench with BENCH=serial: the pressure calibrator and the current meter (both or neither). */
  BENCH_PRESSURE_PORT: z.string().min(1).optional(),
  BENCH_CURRENT_PORT: z.string().min(1).optional(),
  /** Serial port of a HART modem on the local bench with BENCH=serial (optional). */
  BENCH_HART_PORT: z.string().min(1).optional(),
  /** How that modem is keyed: `usb` (by itself) or `rts` (an RS-232 modem keyed by RTS). */
  BENCH_HART_MODEM: z.enum(['usb', 'rts']).default('usb'),
  /**
   * Whether jobs on the local bench use its HART device (identity and configuration check before a
   * run, digital PV and loop current per point, trims by command). Default: on with BENCH=serial and
   * BENCH_HART_PORT; off on the simulated rig, whose HART device is always there (`on` to use it).
   */
  HART_IN_JOB: z.enum(['on', 'off']).optional(),
  /** Hold time in seconds before a stable point is captured (common practice: at least 30 s). */
  HOLD_SECONDS: z.coerce.number().positive().max(3600).default(30),
  /** SMTP URL for mail; unset starts a local fake SMTP server and the Outbox. */
  SMTP_URL: z.string().url().optional(),
  /**
   * bcrypt cost factor of new password hashes (2^N rounds). Unset: 11. Production refuses less than
   * 10 (OWASP Password Storage Cheat Sheet: a work factor of at least 10); test servers use 4,
   * bcrypt's minimum, so each of their sign-ins costs milliseconds instead of a third of a second.
   */
  PASSWORD_HASH_COST: z.coerce.number().int().min(4).max(15).optional(),
  DEMO_PASSWORD: z.string().min(10, 'DEMO_PASSWORD must have at least 10 characters').default('stillpoint-demo'),
  /** Secret for signing session tokens (≥ 32 chars); generated into DATA_DIR when unset. */
  SESSION_SECRET: z.string().min(32, 'SESSION_SECRET must have at least 32 characters').optional(),
  /** Origins allowed for state-changing requests besides the server's own. Comma-separated. */
  ALLOWED_ORIGINS: z.string().default(''),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  /**
   * Demo site seeding into an empty database: unset seeds it only when listening on loopback; `1`
   * seeds it on any HOST (with a warning naming the demo password); `0` never seeds it.
   */
  SEED_DEMO: z.enum(['0', '1']).optional(),
  /** Free disk in DATA_DIR below which /api/health answers 503 (the product could not store what it acknowledges), MiB. */
  MIN_FREE_DISK_MB: z.coerce.number().positive().default(256),
  /**
   * How long /api/health waits for the database's trivial query before it answers 503, ms (our own
   * default). Test servers on a shared two-core machine at a load average near 20 take longer.
   */
  HEALTH_DB_TIMEOUT_MS: z.coerce.number().int().min(100).max(60_000).default(2000),
}).refine((e) => e.NODE_ENV !== 'production' || e.PASSWORD_HASH_COST === undefined || e.PASSWORD_HASH_COST >= 10, {
  message: 'PASSWORD_HASH_COST must be at least 10 in production (OWASP Password Storage Cheat Sheet)',
  path: ['PASSWORD_HASH_COST'],
}).refine((e) => !e.BENCH_PRESSURE_PORT === !e.BENCH_CURRENT_PORT, {
  message: 'set both BENCH_PRESSURE_PORT and BENCH_CURRENT_PORT, or neither',
  path: ['BENCH_CURRENT_PORT'],
});

export type Env = z.infer<typeof EnvSchema>;

/** Environment of the bench agent (`npm run agent`); its other settings are command-line arguments. */
const AgentEnvSchema = z.object({
  /** A bench agent's token (registered on the server's Bench page; shown once), when not given as --token. */
  AGENT_TOKEN: z.string().min(1).optional(),
});
export type AgentEnv = z.infer<typeof AgentEnvSchema>;

function parseWith<S extends z.ZodType>(schema: S, source: Record<string, string | undefined>): z.infer<S> {
  const cleaned = Object.fromEntries(Object.entries(source).filter(([, v]) => v !== undefined && v !== ''));
  const parsed = schema.safeParse(cleaned);
  if (parsed.success) return parsed.data;
  const lines = parsed.error.issues.map((i) => `  - ${i.path.join('.') || '(env)'}: ${i.message}`);
  throw new Error(`Invalid environment:\n${lines.join('\n')}`);
}

/** Parses the environment; on failure throws one readable message listing every bad variable. */
export function parseEnv(source: Record<string, string | undefined> = process.env): Env {
  return parseWith(EnvSchema, source);
}

/** Parses the bench agent's environment, like {@link parseEnv}. */
export function parseAgentEnv(source: Record<string, string | undefined> = process.env): AgentEnv {
  return parseWith(AgentEnvSchema, source);
}

/** True for an address or name that only this machine can reach. */
export function isLoopbackHost(host: string): boolean {
  const h = host.toLowerCase().replace(/^\[|\]$/g, '');
  return h === 'localhost' || h.endsWith('.localhost') || h === '::1' || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(h) || h === '::ffff:127.0.0.1';
}

/** The address to listen on: HOST, or loopback when it is unset. */
export function listenHost(env: Env): string {
  return env.HOST ?? '127.0.0.1';
}

/**
 * Whether to seed the demo site (its users share the documented DEMO_PASSWORD): `'seed'` on a
 * loopback HOST unless SEED_DEMO=0; `'seed-exposed'` when SEED_DEMO=1 was set explicitly on a
 * network HOST (seed, and warn); `'refuse'` on a network HOST without it; `'skip'` for SEED_DEMO=0.
 */
export function demoSeedPolicy(env: Env): 'seed' | 'seed-exposed' | 'refuse' | 'skip' {
  if (env.SEED_DEMO === '0') return 'skip';
  if (isLoopbackHost(listenHost(env))) return 'seed';
  return env.SEED_DEMO === '1' ? 'seed-exposed' : 'refuse';
}

/** The Express `trust proxy` value for TRUST_PROXY: false when unset; a hop count, true, or an address list. */
export function trustProxySetting(env: Env): boolean | number | string {
  const v = env.TRUST_PROXY?.trim();
  if (!v || v === 'false' || v === '0') return false;
  if (v === 'true') return true;
  if (/^\d+$/.test(v)) return Number(v);
  return v;
}
