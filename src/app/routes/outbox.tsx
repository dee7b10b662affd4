import type { QueryClient } from '@tanstack/react-query';
import type { LoaderFunctionArgs } from 'react-router';
import { requireArea } from '../auth-guard';
import { PlaceholderPage } from './placeholder';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  ({ request }: LoaderFunctionArgs) =>
    requireArea(queryClient, request, 'outbox');

export function Component() {
  return (
    <PlaceholderPage
      title="Outbox"
      summary="Admin only."
      headline="Mail sent by Stillpoint will appear here"
      details="When no SMTP server is configured, the team mail (assignments, submissions, returns, approvals, standards falling due, the weekly due list) is kept by a local mail server and listed here. This page is not built yet."
    />
  );
}

export const ErrorBoundary = RouteErrorBoundary;
