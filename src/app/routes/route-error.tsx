import { isRouteErrorResponse, Link, useRouteError } from 'react-router';
import { isApiError } from '../../lib/api-client';

function describe(error: unknown): { title: string; message: string } {
  if (isRouteErrorResponse(error)) {
    const msg = typeof error.data === 'object' && error.data && 'message' in error.data ? String(error.data.message) : error.statusText;
    if (error.status === 403) return { title: 'No access', message: msg || 'Your role does not give access to this page.' };
    if (error.status === 404) return { title: 'Page not found', message: 'There is nothing at this address.' };
    return { title: `Error ${error.status}`, message: msg || 'Something went wrong.' };
  }
  if (isApiError(error)) {
    if (error.status === 403) return { title: 'No access', message: error.message };
    return { title: 'Could not load this page', message: error.message };
  }
  if (error instanceof Error) return { title: 'Something went wrong', message: error.message };
  return { title: 'Something went wrong', message: 'An unexpected error occurred.' };
}

/** Shared ErrorBoundary for route modules: says what went wrong and offers a way on. */
export function RouteErrorBoundary() {
  const error = useRouteError();
  const { title, message } = describe(error);
  return (
    <div role="alert" className="mx-auto my-10 max-w-lg rounded-card border border-line bg-surface p-6 shadow-card">
      <h1 className="text-lg font-semibold text-ink">{title}</h1>
      <p className="mt-2 text-sm text-ink-muted">{message}</p>
      <div className="mt-4 flex gap-3 text-sm">
        <Link to="/queue" className="font-medium text-accent underline-offset-2 hover:underline">
          Go to the queue
        </Link>
        <button type="button" onClick={() => window.location.reload()} className="font-medium text-ink-muted hover:text-ink">
          Reload
        </button>
      </div>
    </div>
  );
}
