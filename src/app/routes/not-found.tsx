import { Link } from 'react-router';
import { EmptyState } from '../../components/ui/empty-state';

export function Component() {
  return (
    <EmptyState
      title="Page not found"
      description="There is nothing at this address."
      action={
        <Link to="/queue" className="text-sm font-medium text-accent underline-offset-2 hover:underline">
          Go to the queue
        </Link>
      }
    />
  );
}
