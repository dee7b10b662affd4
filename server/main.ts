import { parseEnv } from './env';
import { createLogger } from './logger';
import { boot } from './boot';
import { DataDirLockedError } from './db/client';

/**
 * Composition root: validated env → boot (server/boot.ts wires db → services → bench: hub, capture
 * engines, serial binding or simulated rig → mail → app → listen → ws; the tests boot the same
 * wiring) → clean shutdown on SIGINT/SIGTERM. Nothing else reads the environment.
 */
async function main() {
  let env;
  try {
    env = parseEnv();
  } catch (e) {
    console.error((e as Error).message);
    process.exit(2);
  }
  const logger = createLogger(env.LOG_LEVEL);
  let devMiddleware;
  if (env.NODE_ENV === 'development') {
    const { createServer } = await import('vite');
    const vite = await createServer({ server: { middlewareMode: true }, appType: 'spa' });
    devMiddleware = vite.middlewares;
  }
  let running;
  try {
    running = await boot({ env, logger, devMiddleware });
  } catch (e) {
    if (e instanceof DataDirLockedError) {
      logger.fatal(e.message);
      console.error(`\nStillpoint did not start: ${e.message}\n`);
      process.exit(3);
    }
    throw e;
  }
  logger.info({ url: `http://localhost:${env.PORT}`, db: running.database.kind, bench: env.BENCH }, 'Stillpoint is listening');
  const shutdown = async (signal: string) => {
    logger.info({ signal }, 'shutting down');
    const timer = setTimeout(() => process.exit(1), 10_000);
    timer.unref();
    try {
      await running.close();
    } finally {
      process.exit(0);
    }
  };
  process.once('SIGINT', () => void shutdown('SIGINT'));
  process.once('SIGTERM', () => void shutdown('SIGTERM'));
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
