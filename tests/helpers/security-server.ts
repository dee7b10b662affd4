/**
 * The server of the security proofs (`tests/proof/security*.test.ts`): booted with a known session
 * secret (so a test can forge tokens with the right key), every role signed in, and the data tables
 * that nothing writes in the background (so a refused request can be shown to have written nothing).
 */
import { afterAll, beforeAll } from 'vitest';
import type { Role } from '../../shared/schemas/auth';
import { startTestServer, type ApiClient, type TestServer } from './test-server';
import { busyTables, dataTables, signInAll } from './proof-helpers';

export const SECRET = 'proof-secret-0123456789-abcdefghijklmnopqrstuvwxyz';

export interface SecurityServer {
  srv: TestServer;
  clients: Record<Role, ApiClient>;
  /** Data tables whose row counts only a request can change. */
  tracked: string[];
}

/** Boots the server before the calling file's tests and closes it after; the fields are set from then on. */
export function useSecurityServer(): SecurityServer {
  const ctx = {} as SecurityServer;
  beforeAll(async () => {
    ctx.srv = await startTestServer({ env: { SESSION_SECRET: SECRET } });
    ctx.clients = await signInAll(ctx.srv.url);
    const tables = await dataTables(ctx.srv);
    const busy = await busyTables(ctx.srv, tables, 800);
    ctx.tracked = tables.filter((t) => !busy.includes(t));
  }, 120_000);
  afterAll(async () => {
    await ctx.srv?.close();
  });
  return ctx;
}
