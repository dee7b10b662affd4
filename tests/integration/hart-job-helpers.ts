import { afterAll, beforeAll } from 'vitest';
import { readyForRun } from '../helpers/e2e';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

/** A real server with HART in the job, the technician and the admin signed in, and a job ready for a run. */
export interface HartJob {
  srv: TestServer;
  tech: ApiClient;
  admin: ApiClient;
  jobId: string;
  /** Closes the server now (for a test of what stopping leaves behind); after that, nothing is left to close. */
  stop(): Promise<void>;
}

/**
 * Boots the server (BENCH=sim, HART_IN_JOB=on, PGlite through the migrations) before the calling
 * file's tests, readies a job of FT-101 under permit `permitNo`, and closes the server after them.
 * `holdSeconds` is the hold at each point, in seconds (default 2).
 */
export function useHartJob(permitNo: string, holdSeconds = 2): HartJob {
  let open = false;
  const ctx = {
    async stop() {
      if (!open) return;
      open = false;
      await ctx.srv.close();
    },
  } as HartJob;
  beforeAll(async () => {
    ctx.srv = await startTestServer({ env: { HART_IN_JOB: 'on', HOLD_SECONDS: String(holdSeconds) } });
    open = true;
    ctx.tech = new ApiClient(ctx.srv.url);
    await ctx.tech.login(demoEmail('tech'));
    ctx.admin = new ApiClient(ctx.srv.url);
    await ctx.admin.login(demoEmail('admin'));
    ctx.jobId = await readyForRun(ctx.tech, permitNo);
  }, 120_000);
  afterAll(() => ctx.stop());
  return ctx;
}

/** Reads until `ok` holds, every 100 ms; throws naming `what` and the last value after `timeoutMs`. */
export async function until<T>(read: () => T | Promise<T>, ok: (v: T) => boolean, what: string, timeoutMs = 30_000): Promise<T> {
  const end = performance.now() + timeoutMs;
  for (;;) {
    const v = await read();
    if (ok(v)) return v;
    if (performance.now() > end) throw new Error(`timed out waiting for ${what}: ${JSON.stringify(v)}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}
