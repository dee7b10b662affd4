/**
 * Register lists answer their total without counting when the page already tells it (the last
 * page), and count otherwise: the total is the same either way.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
beforeAll(async () => {
  srv = await startTestServer();
});
afterAll(async () => {
  await srv.close();
});

describe('list totals', () => {
  it('are the same on a full page, the last page, an empty page past the end, and a search', async () => {
    const c = new ApiClient(srv.url);
    await c.login(demoEmail('tech'));
    const page = async (path: string) => (await c.get(path)).body as { items: unknown[]; total: number };
    const all = await page('/api/instruments?pageSize=100');
    expect(all.total).toBe(12); // the demo registers (tests/integration/foundation.test.ts)
    expect(all.items).toHaveLength(12);
    expect(await page('/api/instruments?pageSize=5&page=1')).toMatchObject({ total: 12 });
    const last = await page('/api/instruments?pageSize=5&page=3');
    expect(last.items).toHaveLength(2);
    expect(last.total).toBe(12);
    const past = await page('/api/instruments?pageSize=5&page=4');
    expect(past.items).toHaveLength(0);
    expect(past.total).toBe(12);
    expect(await page('/api/instruments?pageSize=4&page=3')).toMatchObject({ total: 12 });
    expect((await page('/api/standards?pageSize=3&page=2')).total).toBe(4);
    expect((await page('/api/standards?pageSize=2&page=2')).total).toBe(4);
    const none = await page('/api/standards?q=no-such-standard-anywhere');
    expect(none).toEqual({ items: [], total: 0 });
  });
});
