import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RouteSpec } from '../../server/http/route-table';
import { allows } from '../../server/http/policy';
import { ApiClient, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let srv: TestServer;
const clients: Record<string, ApiClient> = {};
const ROLES = { technician: 'tech', lead: 'lead', admin: 'admin', auditor: 'auditor' } as const;

beforeAll(async () => {
  srv = await startTestServer();
  for (const [role, who] of Object.entries(ROLES)) {
    clients[role] = new ApiClient(srv.url);
    await clients[role].login(demoEmail(who));
  }
  clients['signed-out'] = new ApiClient(srv.url);
});
afterAll(async () => {
  await srv?.close();
});

const SAMPLE_ID = '00000000-0000-4000-8000-000000000000';
const concrete = (path: string) => path.replace(/:[a-zA-Z]+/g, SAMPLE_ID);

describe('role matrix: every route × every role, plus signed out', () => {
  it('has every mounted route in the table', () => {
    const routes = srv.server.listeners('request').length; // the app is mounted
    expect(routes).toBe(1);
    const specs = (srv.server.listeners('request')[0] as unknown as { locals: { routes: RouteSpec[] } }).locals.routes;
    expect(specs.length).toBeGreaterThan(15);
    expect(specs.map((s) => `${s.method} ${s.path}`)).toEqual(expect.arrayContaining(['post /api/auth/password', 'post /api/users/:id/reset-password', 'post /api/users/:id/unlock']));
  });

  it('refuses exactly what the policy table refuses', async () => {
    const specs = (srv.server.listeners('request')[0] as unknown as { locals: { routes: RouteSpec[] } }).locals.routes;
    const checked: string[] = [];
    for (const spec of specs) {
      // Sign-in is public and rate-limited (tested on its own); sign-out would end the session used here.
      if (spec.path === '/api/auth/login' || spec.path === '/api/auth/logout') continue;
      for (const [who, client] of Object.entries(clients)) {
        const r = await client.req(spec.method.toUpperCase(), concrete(spec.path), spec.method === 'get' ? undefined : {});
        const label = `${spec.method.toUpperCase()} ${spec.path} as ${who}: ${r.status}`;
        if (spec.action === null) expect(r.status, label).not.toBe(401);
        else if (who === 'signed-out') expect(r.status, label).toBe(401);
        else if (allows(spec.action, who as keyof typeof ROLES)) expect([401, 403], label).not.toContain(r.status);
        else expect(r.status, label).toBe(403);
        expect(r.status, label).toBeLessThan(500);
        checked.push(label);
      }
    }
    expect(checked.length).toBeGreaterThan(60);
  });
});
