import type { QueryClient } from '@tanstack/react-query';
import { createBrowserRouter, Navigate, redirect, type RouteObject } from 'react-router';
import * as appLayout from './routes/app-layout';
import * as audit from './routes/audit';
import * as bench from './routes/bench';
import * as inbox from './routes/inbox';
import * as instruments from './routes/instruments';
import * as login from './routes/login';
import * as notFound from './routes/not-found';
import * as outbox from './routes/outbox';
import * as password from './routes/password';
import * as queue from './routes/queue';
import * as records from './routes/records';
import { RouteErrorBoundary } from './routes/route-error';
import * as standards from './routes/standards';
import * as users from './routes/users';

/** Route table; loaders close over the query client (auth and role guards, prefetching). */
export function createRoutes(queryClient: QueryClient): RouteObject[] {
  return [
    {
      path: '/login',
      Component: login.Component,
      ErrorBoundary: login.ErrorBoundary,
      HydrateFallback: appLayout.HydrateFallback,
      loader: login.createLoader(queryClient),
    },
    {
      // Outside the shell: a user who must choose a new password sees only this.
      path: '/password',
      Component: password.Component,
      ErrorBoundary: password.ErrorBoundary,
      HydrateFallback: appLayout.HydrateFallback,
      loader: password.createLoader(queryClient),
    },
    {
      // The capture screen runs outside the shell: the whole screen for the bench.
      path: '/runs/:id',
      HydrateFallback: appLayout.HydrateFallback,
      // Loaded on demand: the charting code stays out of the first bundle.
      lazy: async () => {
        const m = await import('./routes/run');
        return { Component: m.Component, ErrorBoundary: m.ErrorBoundary, loader: m.createLoader(queryClient) };
      },
    },
    {
      id: 'app',
      path: '/',
      Component: appLayout.Component,
      ErrorBoundary: appLayout.ErrorBoundary,
      loader: appLayout.createLoader(queryClient),
      HydrateFallback: appLayout.HydrateFallback,
      children: [
        { index: true, loader: () => redirect('/queue'), Component: () => <Navigate to="/queue" replace /> },
        { path: 'queue', Component: queue.Component, ErrorBoundary: queue.ErrorBoundary, loader: queue.createLoader(queryClient) },
        {
          path: 'jobs/:id',
          lazy: async () => {
            const m = await import('./routes/job');
            return { Component: m.Component, ErrorBoundary: m.ErrorBoundary, loader: m.createLoader(queryClient) };
          },
        },
        {
          path: 'jobs/:id/review',
          lazy: async () => {
            const m = await import('./routes/review');
            return { Component: m.Component, ErrorBoundary: m.ErrorBoundary, loader: m.createLoader(queryClient) };
          },
        },
        {
          path: 'instruments/:id/drift',
          lazy: async () => {
            const m = await import('./routes/drift');
            return { Component: m.Component, ErrorBoundary: m.ErrorBoundary, loader: m.createLoader(queryClient) };
          },
        },
        {
          path: 'instruments',
          Component: instruments.Component,
          ErrorBoundary: instruments.ErrorBoundary,
          loader: instruments.createLoader(queryClient),
        },
        {
          path: 'standards',
          Component: standards.Component,
          ErrorBoundary: standards.ErrorBoundary,
          loader: standards.createLoader(queryClient),
        },
        { path: 'bench', Component: bench.Component, ErrorBoundary: bench.ErrorBoundary, loader: bench.createLoader(queryClient) },
        { path: 'records', Component: records.Component, ErrorBoundary: records.ErrorBoundary, loader: records.createLoader(queryClient) },
        { path: 'review', Component: inbox.Component, ErrorBoundary: inbox.ErrorBoundary, loader: inbox.createLoader(queryClient) },
        { path: 'audit', Component: audit.Component, ErrorBoundary: audit.ErrorBoundary, loader: audit.createLoader(queryClient) },
        { path: 'users', Component: users.Component, ErrorBoundary: users.ErrorBoundary, loader: users.createLoader(queryClient) },
        { path: 'outbox', Component: outbox.Component, ErrorBoundary: outbox.ErrorBoundary, loader: outbox.createLoader(queryClient) },
        { path: '*', Component: notFound.Component, ErrorBoundary: RouteErrorBoundary },
      ],
    },
  ];
}

export function createAppRouter(queryClient: QueryClient) {
  return createBrowserRouter(createRoutes(queryClient));
}

export type AppRouter = ReturnType<typeof createAppRouter>;
