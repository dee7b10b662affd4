import { PlaceholderPage } from './placeholder';
import { RouteErrorBoundary } from './route-error';

export function Component() {
  return (
    <PlaceholderPage
      title="Records"
      summary="Signed calibration records and their history."
      headline="Approved records will appear here"
      details="Each approved calibration with its as-found and as-left results, certificate, revisions and the as-found history per tag for drift and interval review. This page is not built yet."
    />
  );
}

export const ErrorBoundary = RouteErrorBoundary;
