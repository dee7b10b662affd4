import { PlaceholderPage } from './placeholder';
import { RouteErrorBoundary } from './route-error';

export function Component() {
  return (
    <PlaceholderPage
      title="Bench"
      summary="The instruments connected to this bench."
      headline="Devices and live state will appear here"
      details="Serial ports and the devices assigned to them (pressure reference, current meter), each device's protocol profile, live status and a connection test. This page is not built yet."
    />
  );
}

export const ErrorBoundary = RouteErrorBoundary;
