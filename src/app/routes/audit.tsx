import type { QueryClient } from '@tanstack/react-query';
import type { LoaderFunctionArgs } from 'react-router';
import { requireArea } from '../auth-guard';
import { PlaceholderPage } from './placeholder';
import { RouteErrorBoundary } from './route-error';

export const createLoader =
  (queryClient: QueryClient) =>
  ({ request }: LoaderFunctionArgs) =>
    requireArea(queryClient, request, 'audit');

export function Component() {
  return (
    <PlaceholderPage
      title="Audit"
      summary="For leads, admins and auditors."
      headline="The audit trail will appear here"
      details="Every change to registers, jobs, runs and sign-offs: who, when, what changed and why, in an append-only, tamper-evident trail. This page is not built yet."
    />
  );
}

export const ErrorBoundary = RouteErrorBoundary;
