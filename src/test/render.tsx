import { QueryClientProvider } from '@tanstack/react-query';
import { render } from '@testing-library/react';
import type { ReactElement } from 'react';
import { createMemoryRouter, RouterProvider } from 'react-router';
import { createQueryClient } from '../lib/query-client';

/** A fresh query client with no retries, for tests. */
export function testQueryClient() {
  const qc = createQueryClient();
  qc.setDefaultOptions({ queries: { retry: false, staleTime: Infinity }, mutations: { retry: false } });
  return qc;
}

/** Render inside a query client and a memory router (for NavLink/Link). */
export function renderWithProviders(ui: ReactElement, { path = '/' }: { path?: string } = {}) {
  const queryClient = testQueryClient();
  const router = createMemoryRouter([{ path: '*', element: ui }], { initialEntries: [path] });
  const utils = render(
    <QueryClientProvider client={queryClient}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return { ...utils, queryClient, router };
}

export interface FakeRoute {
  status: number;
  body?: unknown;
}

/**
 * A stand-in for `fetch` answering by "METHOD /path"; records each call.
 * Unknown routes answer 404 with our error body.
 */
export function fakeFetch(routes: Record<string, FakeRoute | ((init: RequestInit | undefined) => FakeRoute)>) {
  const calls: Array<{ method: string; path: string; init: RequestInit | undefined }> = [];
  const fn = async (input: RequestInfo | URL, init?: RequestInit): Promise<Response> => {
    const url = new URL(typeof input === 'string' ? input : input instanceof URL ? input.href : input.url, 'http://localhost');
    const method = (init?.method ?? 'GET').toUpperCase();
    calls.push({ method, path: url.pathname, init });
    const r = routes[`${method} ${url.pathname}`];
    const res = typeof r === 'function' ? r(init) : (r ?? { status: 404, body: { error: { code: 'not_found', message: 'Not found' } } });
    return new Response(res.body === undefined ? null : JSON.stringify(res.body), {
      status: res.status,
      headers: res.body === undefined ? {} : { 'Content-Type': 'application/json' },
    });
  };
  return { fn, calls };
}
