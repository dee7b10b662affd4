import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import type { AddressInfo, Socket } from 'node:net';
import type { RequestHandler } from 'express';
import type { Logger } from 'pino';
import { SIM_PATHS, SimRig } from '../simulators/sim-rig';
import { createApp } from './app';
import { BenchHub } from './bench/hub';
import { createSimControl, type SimController } from './bench/sim-control';
import { defaultBinding } from './bench/transport';
import type { LineProtocolProfile } from '../shared/protocol';
import { openDatabase, type Database } from './db/client';
import { addressKey, clientAddressOf } from './http/client-address';
import { demoSeedPolicy, listenHost, trustProxySetting, type Env } from './env';
import { benchRoutes } from './http/routes/bench/bench.routes';
import { storageRoutes } from './http/routes/bench/storage.routes';
import { benchesRoutes } from './http/routes/benches/benches.routes';
import { uploadRoutes } from './http/routes/files/files.routes';
import { outboxRoutes } from './http/routes/outbox/outbox.routes';
import { runRoutes } from './http/routes/runs/runs.routes';
import { simRoutes } from './http/routes/sim/sim.routes';
import { startFakeSmtp, type FakeSmtp } from './mail/fake-smtp';
import { createMailer, type Mailer } from './mail/mailer';
import { createServices, type ServiceHooks, type Services } from './services';
import { createFileService, type FileService } from './services/file.service';
import { createMailService, type MailService } from './services/mail.service';
import { createMailScheduler } from './services/mail-schedule.service';
import { createFileStore } from './storage/file-store';
import { createUploads } from './storage/upload';
import { createBenchService, DEFAULT_BENCH_ID, journalDirOf, type BenchService } from './services/bench.service';
import { createBenchRegistry, type BenchRegistry } from './services/bench-registry.service';
import { createForwardService, type ForwardService } from './services/forward.service';
import { seedDemo } from './demo/demo-seed';
import { createHealth } from './services/health.service';
import { createSessionEvents } from './services/session-events';
import { createRunService, type RunService } from './services/run.service';
import type { StoreRetryOptions } from './services/run-commit';
import { createHartJobService, type HartJobService } from './services/hart-job.service';
import { hartRoutes } from './http/routes/hart/hart.routes';
import { runRepository, type RunRepository } from './db/repositories/run.repository';
import { attachStreamServer, type StreamServer } from './ws/stream-server';

export interface BootOptions {
  env: Env;
  logger: Logger;
  /** Use an in-memory PGlite (tests) instead of DATA_DIR. Ignored when DATABASE_URL is set. */
  memory?: boolean;
  devMiddleware?: RequestHandler;
  /** In memory mode: start the database from this tarball (a migrated, seeded template; tests). */
  template?: Uint8Array;
  /** Sample journal directory in memory mode (tests); without it an in-memory server keeps no journal. */
  journalDir?: string;
  /** Bench runtime overrides (bench figures, special set-ups). */
  bench?: BenchOverrides;
  /** Wraps the run repository the run service stores through (tests hold writes back with it). */
  wrapRunRepository?: (repo: RunRepository) => RunRepository;
  /** Retries of a run event whose store failed (default: the run service's). */
  runStoreRetry?: StoreRetryOptions;
}

/** Bench runtime overrides of {@link BootOptions}. */
export interface BenchOverrides {
  /** Default: the env's BENCH. */
  mode?: 'sim' | 'serial';
  /** Serial paths of the local bench in 'serial' mode. Default: BENCH_PRESSURE_PORT and BENCH_CURRENT_PORT. */
  serialPaths?: { pressure: string; current: string };
  journalDir?: string;
  benchId?: string;
  /** Rig seed in sim mode. Default 1. */
  simSeed?: number;
  /** Ring capacity, entries. Default 200 000. */
  ringCapacity?: number;
  /** Start no local devices (bench figures, agents-only servers). */
  noLocalDevices?: boolean;
  /** Sample writer interval, ms. Default 250. */
  flushMs?: number;
  /** Line protocol of the local pressure calibrator. */
  profile?: LineProtocolProfile;
}

export interface Running {
  server: http.Server;
  url: string;
  database: Database;
  services: Services;
  bench: BenchService;
  /** Registered benches (agents and their tokens). */
  benches: BenchRegistry;
  forward: ForwardService;
  runs: RunService;
  hartJob: HartJobService;
  /** The simulated rig (BENCH=sim with local devices), else undefined. */
  rig: SimRig | undefined;
  sim: SimController;
  stream: StreamServer;
  files: FileService;
  /** Upload directories: the file store and multer's temp files (a temp dir for in-memory servers). */
  uploadDirs: { store: string; tmp: string };
  mail: MailService;
  /** The local fake SMTP server (SMTP_URL unset). */
  fakeSmtp?: FakeSmtp;
  /** Runs the due-standards and weekly due-list mails now, whatever the schedule says (the scheduler sends each slot once). */
  sendDueMail(): Promise<void>;
  /** Resolves once the scheduler's start-up catch-up has run, with the schedules it sent. */
  scheduledMail: Promise<string[]>;
  close(): Promise<void>;
}

/** Session-signing secret: SESSION_SECRET, or one generated once into the data directory. */
function loadSecret(env: Env, memory: boolean): Uint8Array {
  if (env.SESSION_SECRET) return new TextEncoder().encode(env.SESSION_SECRET);
  if (memory) return randomBytes(32);
  const file = path.join(env.DATA_DIR, 'session-secret');
  if (!fs.existsSync(file)) {
    fs.mkdirSync(env.DATA_DIR, { recursive: true });
    fs.writeFileSync(file, randomBytes(48).toString('base64url'), { mode: 0o600, flag: 'wx' });
  }
  return new TextEncoder().encode(fs.readFileSync(file, 'utf8').trim());
}

/** Serial ports of the local bench with BENCH=serial. */
function serialPaths(env: Env): { pressure: string; current: string; hart?: string } | undefined {
  if (!env.BENCH_PRESSURE_PORT || !env.BENCH_CURRENT_PORT) return undefined;
  return { pressure: env.BENCH_PRESSURE_PORT, current: env.BENCH_CURRENT_PORT, ...(env.BENCH_HART_PORT ? { hart: env.BENCH_HART_PORT } : {}) };
}

/**
 * Composition: db → services → seed → bench runtime → app → listen → WebSocket stream. The capture
 * path is wired here: one hub; the run service's capture engines on it (engine event → stored →
 * published on the hub); the bench service feeding the hub from the local devices on the binding
 * chosen here (real ports, or the simulated rig built here) and from forwarded lines; the rig's
 * control surface given the run service's run context. Returns a handle that closes it all in
 * reverse: stream, HTTP, bench (flush writer, sync journal), db.
 */
export async function boot(opts: BootOptions): Promise<Running> {
  const { env, logger } = opts;
  const memory = !!opts.memory && !env.DATABASE_URL;
  const database = await openDatabase({
    threadNice: env.DB_THREAD_NICE,
    onIdleError: (e) => logger.warn({ err: e }, 'PostgreSQL ended an idle pooled connection; the next query opens a new one'),
    ...(env.DATABASE_URL ? { databaseUrl: env.DATABASE_URL } : {}),
    ...(memory ? (opts.template ? { template: opts.template } : {}) : { dataDir: env.DATA_DIR }),
  });
  let benchToStop: BenchService | undefined;
  let rig: SimRig | undefined;
  let fakeSmtp: FakeSmtp | undefined;
  let mailer: Mailer | undefined;
  let tmpRoot: string | undefined;
  try {
    const hooks: ServiceHooks = {};
    const sessionEvents = createSessionEvents();
    const services = createServices(database, loadSecret(env, memory), hooks, sessionEvents, { hashCost: env.PASSWORD_HASH_COST });
    const seedPolicy = demoSeedPolicy(env);
    if (seedPolicy === 'refuse' && !(await services.users.siteExists())) {
      throw new Error(
        `Not seeding the demo site: HOST=${env.HOST} is reachable from the network and the demo users share the documented demo password. ` +
          'Set SEED_DEMO=1 to seed it anyway, leave HOST unset to listen on loopback, or set SEED_DEMO=0.',
      );
    }
    if (seedPolicy === 'seed-exposed') {
      logger.warn({ host: env.HOST }, `SEED_DEMO=1 on a network address: the demo users (admin included) sign in with the demo password "${env.DEMO_PASSWORD}"; change it or set DEMO_PASSWORD`);
    }
    if ((seedPolicy === 'seed' || seedPolicy === 'seed-exposed') && (await seedDemo(database.db, services.audit, env.DEMO_PASSWORD, new Date(), env.PASSWORD_HASH_COST))) {
      logger.info('seeded the demo site');
    }
    // Uploads live outside the web root: DATA_DIR/uploads (in-memory servers: a temp dir, removed on close).
    const uploadsBase = memory ? (tmpRoot = fs.mkdtempSync(path.join(os.tmpdir(), 'stillpoint-uploads-'))) : env.DATA_DIR;
    const uploadDirs = { store: path.join(uploadsBase, 'uploads'), tmp: path.join(uploadsBase, 'upload-tmp') };
    const store = createFileStore({ root: uploadDirs.store });
    const files = createFileService(database.db, { audit: services.audit, store, uploads: createUploads({ tmpDir: uploadDirs.tmp, store }) });

    // Mail: SMTP_URL, or a local fake SMTP server whose messages land in the Outbox.
    let appUrl = `http://localhost:${env.PORT}`;
    const mailLog = logger.child({ part: 'mail' });
    const mailRef: { service?: MailService } = {};
    if (!env.SMTP_URL) {
      fakeSmtp = await startFakeSmtp({
        port: 0,
        host: '127.0.0.1',
        onMessage: (m) => mailRef.service!.store(m),
        onError: (err) => mailLog.warn({ err }, 'fake SMTP connection error'),
      });
    }
    mailer = createMailer({
      smtpUrl: env.SMTP_URL ?? fakeSmtp!.url,
      from: '"Stillpoint" <noreply@stillpoint.invalid>',
      logger: mailLog,
      onGiveUp: (e) => mailLog.warn({ event: e }, 'mail not delivered'),
    });
    const mail = createMailService(database.db, { mailer, appUrl: () => appUrl, onError: (err, what) => mailLog.warn({ err, what }, 'mail not sent') });
    mailRef.service = mail;
    hooks.onJob = mail.onJob;
    hooks.onReview = mail.onReview;

    const allowedOrigins = env.ALLOWED_ORIGINS.split(',').map((s) => s.trim()).filter(Boolean);

    // The bench: one hub; the capture engines (run service) and the sample writer (bench service) on it.
    const o = opts.bench ?? {};
    const mode = o.mode ?? env.BENCH;
    const hub = new BenchHub({
      ringCapacity: o.ringCapacity,
      onConsumerError: (name, error) => logger.error({ err: error, consumer: name }, 'bench consumer failed'),
    });
    // Registered benches (agents with their tokens, browsers' own benches): who may feed and run on which bench.
    const benches = createBenchRegistry(database.db, services.audit, { localBenchId: o.benchId ?? DEFAULT_BENCH_ID });
    await benches.load();
    const runRepo = runRepository(database.db);
    // HART in the job: the local bench's modem is read late (the bench starts below).
    const benchRef: { current?: BenchService } = {};
    const runsRef: { current?: RunService } = {};
    const hartJob = createHartJobService(database.db, services.audit, {
      enabled: (env.HART_IN_JOB ?? (mode === 'serial' && env.BENCH_HART_PORT ? 'on' : 'off')) === 'on',
      benchId: o.benchId ?? DEFAULT_BENCH_ID,
      modem: () => benchRef.current?.hart(),
      hub,
      holdMs: env.HOLD_SECONDS * 1000,
      activeRunOn: (b) => runsRef.current?.engines.activeRunId(b) ?? undefined,
    });
    const runs = createRunService(
      database.db,
      { audit: services.audit, jobs: services.jobs, hub, runs: opts.wrapRunRepository ? opts.wrapRunRepository(runRepo) : runRepo, hart: hartJob },
      { envHoldSeconds: env.HOLD_SECONDS, logger, mayRunOn: benches.mayRunOn, ...(opts.runStoreRetry ? { storeRetry: opts.runStoreRetry } : {}) },
    );
    runsRef.current = runs;
    // The local bench's devices: the simulated rig's binding, or real serial ports.
    rig = mode === 'sim' && !o.noLocalDevices ? new SimRig({ seed: o.simSeed ?? 1, source: { timeConstantS: 1.5 } }) : undefined;
    const paths = o.noLocalDevices ? undefined : rig ? SIM_PATHS : (o.serialPaths ?? serialPaths(env));
    if (mode === 'serial' && !o.noLocalDevices && !paths) logger.warn('BENCH=serial without BENCH_PRESSURE_PORT and BENCH_CURRENT_PORT: no local bench devices');
    const bench = createBenchService(database.db, {
      mode,
      logger,
      hub,
      engines: runs.engines,
      journalDir: o.journalDir ?? (memory ? opts.journalDir : journalDirOf(env.DATA_DIR)),
      local: paths ? { binding: rig ? rig.binding : defaultBinding(), paths, hartModem: env.BENCH_HART_MODEM } : undefined,
      benchId: o.benchId,
      flushMs: o.flushMs,
      profile: o.profile,
    });
    benchToStop = bench;
    benchRef.current = bench;
    const sim = createSimControl({ rig, hub, benchId: bench.benchId, runContext: () => runs.simContext(bench.benchId) });
    await bench.start();
    const forward = createForwardService(database.db, { bench, registry: benches, auth: services.auth }, { logger });
    await forward.prune();
    const restored = await runs.restoreActive();
    if (restored) logger.info({ restored }, 'restored active runs');
    const app = createApp({
      services,
      logger,
      health: createHealth({
        ping: () => database.exec('SELECT 1'),
        bench,
        db: database.kind,
        mode: env.BENCH,
        dataDir: memory ? undefined : env.DATA_DIR,
        minFreeBytes: env.MIN_FREE_DISK_MB * 1024 * 1024,
        dbTimeoutMs: env.HEALTH_DB_TIMEOUT_MS,
      }),
      allowedOrigins,
      clientDir: path.resolve(import.meta.dirname, '../dist'),
      devMiddleware: opts.devMiddleware,
      extraRoutes: [runRoutes(runs), benchRoutes(bench), benchesRoutes(benches), storageRoutes(bench, services.audit), simRoutes(sim), hartRoutes(hartJob), ...uploadRoutes(files), outboxRoutes(mail)],
      trustProxy: trustProxySetting(env),
      maxInFlight: env.MAX_IN_FLIGHT,
      shedTargetMs: env.SHED_TARGET_MS,
      shedMinInFlight: env.SHED_MIN_IN_FLIGHT,
    });
    const server = http.createServer(app);
    const sockets = new Set<Socket>();
    server.on('connection', (s) => {
      sockets.add(s);
      s.on('close', () => sockets.delete(s));
    });
    await new Promise<void>((resolve, reject) => {
      server.once('error', reject);
      server.listen(env.PORT, listenHost(env), () => resolve());
    });
    const addressOf = clientAddressOf(app);
    const stream = attachStreamServer({ server, auth: services.auth, bench, sessionEvents, registry: benches, forward, logger, allowedOrigins, clientAddress: (req) => addressKey(addressOf(req)) });
    const port = (server.address() as AddressInfo).port;
    if (!env.PORT) appUrl = `http://localhost:${port}`;

    // Due mail on a schedule (croner): each slot sent once, its last run kept in the database, so a
    // restart sends nothing twice; a slot missed while the server was down goes at start.
    let dueRun: Promise<unknown> = Promise.resolve();
    const sendDueMail = () => (dueRun = dueRun.then(() => Promise.all([mail.standardsDue(), mail.weeklyDueList()]))).then(() => {});
    const scheduler = createMailScheduler(database.db, mail, { onError: (err, what) => mailLog.warn({ err, what }, 'scheduled mail not sent') });
    const scheduledMail = scheduler.start();
    let closing: Promise<void> | undefined;
    return {
      server,
      url: `http://127.0.0.1:${port}`,
      database,
      services,
      bench,
      benches,
      forward,
      runs,
      hartJob,
      rig,
      sim,
      stream,
      files,
      uploadDirs,
      mail,
      fakeSmtp,
      sendDueMail,
      scheduledMail,
      close: () =>
        (closing ??= (async () => {
          await scheduler.stop();
          await stream.close();
          await new Promise<void>((resolve) => {
            server.close(() => resolve());
            for (const s of sockets) s.destroy();
          });
          // Any HART trim is aborted and fixed current left while the modem is still open.
          await hartJob.stop();
          await bench.stop();
          sim.close();
          rig?.dispose();
          await runs.settle();
          // Mail before the database: let queued messages reach the fake server (which stores them), then stop both.
          await dueRun.catch(() => {});
          await mailer!.close({ timeoutMs: 5000 });
          await fakeSmtp?.close();
          await database.close();
          if (tmpRoot) fs.rmSync(tmpRoot, { recursive: true, force: true });
        })()),
    };
  } catch (e) {
    await benchToStop?.stop().catch(() => {});
    rig?.dispose();
    await mailer?.close({ timeoutMs: 1000 }).catch(() => {});
    await fakeSmtp?.close().catch(() => {});
    await database.close();
    if (tmpRoot) fs.rmSync(tmpRoot, { recursive: true, force: true });
    throw e;
  }
}
