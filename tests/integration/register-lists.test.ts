/**
 * The register lists and keys. A list answers its total without counting when the page already
 * tells it (the last page), and counts otherwise: the total is the same either way. It searches
 * and sorts by the fields its spec (shared/schemas/registers.ts) names, the ones the page's search
 * box and first sort are built from. The field that names an entry (tag, serial) stays unique.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { INSTRUMENT_REGISTER, STANDARD_REGISTER, registerPath, type RegisterSpec } from '../../shared/schemas/registers';
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
    // A search is literal: LIKE's wildcards typed into the box match only themselves.
    expect((await page('/api/instruments?q=FT-101')).total).toBe(1);
    expect((await page('/api/instruments?q=FT_101')).total).toBe(0);
    expect((await page(`/api/instruments?q=${encodeURIComponent('%')}`)).total).toBe(0);
    expect((await page(`/api/standards?q=${encodeURIComponent('\\')}`)).total).toBe(0);
  });
});

describe('register lists follow their spec', () => {
  const specs = [INSTRUMENT_REGISTER, STANDARD_REGISTER] as RegisterSpec<Record<string, unknown>>[];
  for (const spec of specs) {
    it(`${spec.plural}: sort by each sortable field both ways, fall back to the first, search each search field`, async () => {
      const c = new ApiClient(srv.url);
      await c.login(demoEmail('tech'));
      const path = registerPath(spec);
      type Row = Record<string, unknown>;
      const list = async (qs: string) => ((await c.get(`${path}?pageSize=100&${qs}`)).body as { items: Row[] }).items;
      const ids = (rows: Row[]) => rows.map((r) => r.id);
      const all = await list('');
      expect(all.length).toBeGreaterThan(3);
      for (const field of spec.sortable) {
        const up = await list(`sort=${field}&dir=asc`);
        const down = await list(`sort=${field}&dir=desc`);
        expect(up).toHaveLength(all.length);
        // The values run one way up and the other way down, whatever the collation; ties keep the key's order.
        expect(down.map((r) => r[field])).toEqual(up.map((r) => r[field]).reverse());
        // Ascending under the database's collation: byte order (C) or a language's (en_US); numbers and ISO dates as themselves.
        const v = up.map((r) => r[field] as number | string | null);
        const inOrder = (a: number | string | null, b: number | string | null) =>
          a === null || b === null || a <= b || (typeof a === 'string' && typeof b === 'string' && a.localeCompare(b, 'en', { sensitivity: 'base', ignorePunctuation: true }) <= 0);
        expect(v.slice(1).every((b, i) => inOrder(v[i]!, b)), `${spec.plural} by ${field}: ${JSON.stringify(v)}`).toBe(true);
      }
      expect(ids(await list('sort=no-such-field'))).toEqual(ids(await list(`sort=${spec.sortable[0]}`)));
      expect(ids(all)).toEqual(ids(await list(`sort=${spec.sortable[0]}`)));
      for (const field of Object.keys(spec.search)) {
        const row = all.find((r) => typeof r[field] === 'string' && (r[field] as string).length >= 3)!;
        const q = (row[field] as string).slice(1, 4).toLowerCase();
        const found = await list(`q=${encodeURIComponent(q)}`);
        expect(ids(found)).toContain(row.id);
        for (const r of found) expect(Object.keys(spec.search).some((f) => String(r[f]).toLowerCase().includes(q))).toBe(true);
        expect(found.length).toBe(all.filter((r) => Object.keys(spec.search).some((f) => String(r[f]).toLowerCase().includes(q))).length);
      }
    });
  }
});

describe('register keys', () => {
  for (const spec of [INSTRUMENT_REGISTER, STANDARD_REGISTER] as RegisterSpec<Record<string, unknown>>[]) {
    it(`${spec.plural}: the ${spec.keyField} stays unique on edit and under two concurrent creates, a 409 on that field, never a 500`, async () => {
      const c = new ApiClient(srv.url);
      await c.login(demoEmail('lead'));
      const path = registerPath(spec);
      const [a, b] = ((await c.get(`${path}?pageSize=2`)).body as { items: Record<string, unknown>[] }).items;
      // Editing one entry to the other's key: refused on the key field, the entry unchanged.
      const clash = await c.req('PUT', `${path}/${a!.id}`, { ...a, [spec.keyField]: b![spec.keyField] });
      expect(clash.status, JSON.stringify(clash.body)).toBe(409);
      expect((clash.body as { error: { fields: Record<string, string[]> } }).error.fields[spec.keyField]).toEqual(['Already registered']);
      expect(((await c.get(`${path}/${a!.id}`)).body as Record<string, unknown>)[spec.keyField]).toBe(a![spec.keyField]);
      // Two creates of one new key at once: one is stored, the other refused the same way.
      const fresh = { ...a, [spec.keyField]: `KEY-${spec.noun.toUpperCase()}-NEW` };
      const both = await Promise.all([c.req('POST', path, fresh), c.req('POST', path, fresh)]);
      expect(both.map((r) => r.status).sort()).toEqual([201, 409]);
      const lost = both.find((r) => r.status === 409)!;
      expect((lost.body as { error: { fields: Record<string, string[]> } }).error.fields[spec.keyField]).toEqual(['Already registered']);
      const found = (await c.get(`${path}?pageSize=100&q=${encodeURIComponent(fresh[spec.keyField] as string)}`)).body as { total: number };
      expect(found.total).toBe(1);
    });
  }
});
