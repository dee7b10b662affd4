import { afterAll, beforeAll } from 'vitest';
import { startTestServer, type TestServer } from './test-server';

/**
 * Boots a test server before the calling file's tests, runs `setup` on it (sign-ins, a job to work
 * on) and closes it after them. The returned object holds `srv` and what `setup` returned, from the
 * first test on. `timeoutMs` is the set-up's time limit (default: the project's hook timeout).
 */
export function useTestServer<T extends object>(
  setup: (srv: TestServer) => Promise<T>,
  opts: { env?: Record<string, string>; timeoutMs?: number } = {},
): { srv: TestServer } & T {
  const ctx = {} as { srv: TestServer } & T;
  beforeAll(async () => {
    ctx.srv = await startTestServer({ env: opts.env });
    Object.assign(ctx, await setup(ctx.srv));
  }, opts.timeoutMs);
  afterAll(async () => {
    await ctx.srv?.close();
  });
  return ctx;
}
