import { QueryClientProvider } from '@tanstack/react-query';
import { cleanup, render, screen, waitFor } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { createMemoryRouter, RouterProvider } from 'react-router';
import { fakeFetch, testQueryClient } from '../test/render';
import { safeNext } from './auth-guard';
import { createRoutes } from './router';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const unauth = { status: 401, body: { error: { code: 'unauthenticated', message: 'Sign in first' } } };
const meAs = (role: string) => ({ status: 200, body: { id: 'u1', email: `${role}@x.test`, name: 'Pat', role, siteName: 'Demo site' } });

function start(path: string) {
  const qc = testQueryClient();
  const router = createMemoryRouter(createRoutes(qc), { initialEntries: [path] });
  render(
    <QueryClientProvider client={qc}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return router;
}

describe('router guards', () => {
  it('sends a signed-out visitor to /login, keeping where they were going', async () => {
    vi.stubGlobal('fetch', fakeFetch({ 'GET /api/auth/me': unauth }).fn);
    const router = start('/instruments');
    await screen.findByRole('heading', { name: 'Sign in to Stillpoint' });
    expect(router.state.location.pathname).toBe('/login');
    expect(router.state.location.search).toBe('?next=%2Finstruments');
  });

  it('refuses the Users page to a technician with a 403 page, and hides the link', async () => {
    vi.stubGlobal('fetch', fakeFetch({ 'GET /api/auth/me': meAs('technician'), 'GET /api/jobs': { status: 200, body: { items: [] } } }).fn);
    start('/users');
    expect(await screen.findByRole('heading', { name: 'No access' })).toBeTruthy();
    expect(screen.queryByTestId('nav-users')).toBeNull();
  });

  it('opens the Users page for an admin', async () => {
    vi.stubGlobal(
      'fetch',
      fakeFetch({
        'GET /api/auth/me': meAs('admin'),
        'GET /api/users': {
          status: 200,
          body: { items: [{ id: 'u2', email: 'sam@x.test', name: 'Sam Roe', role: 'technician', active: true, createdAt: '2025-01-01T00:00:00Z' }] },
        },
      }).fn,
    );
    start('/users');
    expect(await screen.findByText('Sam Roe')).toBeTruthy();
    expect(screen.getByTestId('nav-users')).toBeTruthy();
  });

  it('redirects / to the queue and shows "Assigned to me" first for a technician', async () => {
    const job = (id: string, tag: string, assigneeId: string | null) => ({
      id, instrumentId: 'i', tag, status: 'open', assigneeId, assigneeName: assigneeId ? 'Someone' : null, dueOn: '2030-01-01',
      overdue: false, permitNo: null, notes: '', revision: 1, createdAt: 'x', updatedAt: 'x',
    });
    vi.stubGlobal(
      'fetch',
      fakeFetch({ 'GET /api/auth/me': meAs('technician'), 'GET /api/jobs': { status: 200, body: { items: [job('a', 'PT-9', 'u9'), job('b', 'FT-1', 'u1')] } } }).fn,
    );
    const router = start('/');
    const mine = await screen.findByRole('list', { name: 'Assigned to me' });
    await waitFor(() => expect(router.state.location.pathname).toBe('/queue'));
    expect(mine.textContent).toContain('FT-1');
    expect(mine.textContent).not.toContain('PT-9');
    const headings = screen.getAllByRole('heading', { level: 2 }).map((h) => h.textContent);
    expect(headings).toEqual(['Assigned to me', 'Other jobs']);
  });

  it('only follows same-site paths after sign-in', () => {
    expect(safeNext('/standards?x=1')).toBe('/standards?x=1');
    expect(safeNext('//evil.example')).toBe('/');
    expect(safeNext('https://evil.example')).toBe('/');
    expect(safeNext(null)).toBe('/');
  });
});
