import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
let auditor: ApiClient;
let lead: ApiClient;

beforeAll(async () => {
  srv = await startTestServer();
  auditor = new ApiClient(srv.url);
  lead = new ApiClient(srv.url);
  await auditor.login(demoEmail('auditor'));
  await lead.login(demoEmail('lead'));
  // Some history: a register change with old and new values.
  const inst = (await lead.get('/api/instruments?q=PT-302')).body.items[0];
  const { id, ...rest } = inst;
  const body = Object.fromEntries(Object.entries(rest).filter(([k]) => !['createdAt', 'updatedAt', 'nextDueOn', 'lastCalibratedOn'].includes(k)));
  expect((await lead.req('PUT', `/api/instruments/${id}`, { ...body, notes: 'Checked the impulse lines' })).status).toBe(200);
});
afterAll(async () => {
  await srv?.close();
});

describe('audit trail: append-only and tamper-evident', () => {
  it('records sign-ins and changes with old and new values', async () => {
    const items = (await auditor.get('/api/audit?limit=1000')).body.items as Array<{ action: string; before: { notes?: string } | null; after: { notes?: string } | null }>;
    expect(items.some((e) => e.action === 'auth.signed-in')).toBe(true);
    const change = items.find((e) => e.action === 'instrument.changed')!;
    expect(change.before!.notes).toBe('');
    expect(change.after!.notes).toBe('Checked the impulse lines');
  });

  it('filters by entity', async () => {
    const items = (await auditor.get('/api/audit?entity=instrument')).body.items as Array<{ entity: string }>;
    expect(items.length).toBeGreaterThan(0);
    expect(new Set(items.map((e) => e.entity))).toEqual(new Set(['instrument']));
  });

  it('verifies an intact chain', async () => {
    const r = await auditor.get('/api/audit/verify');
    expect(r.status).toBe(200);
    expect(r.body.ok).toBe(true);
    expect(r.body.checked).toBeGreaterThan(3);
  });

  it('has the database refuse an UPDATE, a DELETE and a TRUNCATE of the trail', async () => {
    await expect(srv.database.exec(`UPDATE audit_events SET action = 'edited' WHERE id = 2`)).rejects.toThrow(/append-only/);
    await expect(srv.database.exec(`DELETE FROM audit_events WHERE id = 2`)).rejects.toThrow(/append-only/);
    await expect(srv.database.exec(`TRUNCATE audit_events`)).rejects.toThrow(/append-only/);
    expect((await auditor.get('/api/audit/verify')).body.ok).toBe(true);
  });

  it('reports a row altered underneath the trigger, naming the row', async () => {
    const items = (await auditor.get('/api/audit?entity=instrument')).body.items as Array<{ id: number; action: string }>;
    const target = items.find((e) => e.action === 'instrument.changed')!;
    await srv.database.exec(`ALTER TABLE audit_events DISABLE TRIGGER audit_events_no_update`);
    try {
      await srv.database.exec(`UPDATE audit_events SET after = jsonb_set(after, '{notes}', '"nothing to see"') WHERE id = ${target.id}`);
    } finally {
      await srv.database.exec(`ALTER TABLE audit_events ENABLE TRIGGER audit_events_no_update`);
    }
    const r = await auditor.get('/api/audit/verify');
    expect(r.body.ok).toBe(false);
    expect(r.body.brokenAt).toEqual({ id: target.id, reason: 'content does not match its hash' });
    expect(r.body.checked).toBe(target.id - 1);
    // The trigger is back: a further edit is refused again.
    await expect(srv.database.exec(`UPDATE audit_events SET action = 'x' WHERE id = ${target.id}`)).rejects.toThrow(/append-only/);
  });

  it('is not open to technicians', async () => {
    const tech = new ApiClient(srv.url);
    await tech.login(demoEmail('tech'));
    expect((await tech.get('/api/audit')).status).toBe(403);
    expect((await tech.get('/api/audit/verify')).status).toBe(403);
  });
});
