/**
 * The server of the security proofs (`tests/proof/security*.test.ts`): booted with a known session
 * secret (so a test can forge tokens with the right key), every role signed in, and the data tables
 * that nothing writes in the background (so a refused request can be shown to have written nothing).
 */
import { busyTables, dataTables, signInAll } from './proof-helpers';
import { useTestServer } from './use-test-server';

export const SECRET = 'proof-secret-0123456789-abcdefghijklmnopqrstuvwxyz';

/** Boots the server before the calling file's tests and closes it after; the fields are set from then on. */
export function useSecurityServer() {
  return useTestServer(
    async (srv) => {
      const clients = await signInAll(srv.url);
      const tables = await dataTables(srv);
      const busy = await busyTables(srv, tables, 800);
      /** Data tables whose row counts only a request can change. */
      const tracked = tables.filter((t) => !busy.includes(t));
      return { clients, tracked };
    },
    { env: { SESSION_SECRET: SECRET }, timeoutMs: 120_000 },
  );
}
