/**
 * Text holding U+0000 cannot be stored by PostgreSQL; the API refuses it as a field error (400)
 * in params, query and body alike, before it reaches the database (found by the API fuzz on
 * PostgreSQL: `GET /api/audit?entityId=%00` answered 500).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signInAll } from '../helpers/proof-helpers';
import { startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
beforeAll(async () => {
  srv = await startTestServer();
}, 60_000);
afterAll(async () => {
  await srv?.close();
});

describe('NUL in text input', () => {
  it('is a 400 with the field named, in a query and in a body', async () => {
    const { lead, admin } = await signInAll(srv.url);
    const q = await lead.get('/api/audit?entityId=%00');
    expect(q.status).toBe(400);
    expect(q.body.error.fields['query.entityId']).toEqual(['Text may not contain the NUL character (U+0000)']);
    const b = await admin.post('/api/users', { email: 'nul@stillpoint-demo.test', name: 'A\u0000B', role: 'technician', password: 'a-long-enough-password-1' });
    expect(b.status).toBe(400);
    expect(b.body.error.fields.name).toEqual(['Text may not contain the NUL character (U+0000)']);
    // The same request without the NUL goes through.
    const ok = await lead.get('/api/audit?entityId=x');
    expect(ok.status).toBeLessThan(500);
  });
});
