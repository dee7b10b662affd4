import { ErrorNotice } from '../../../components/ui/error-notice';
import { ListSkeleton } from '../../../components/ui/skeleton';
import { useOutboxMessage } from '../api/get-outbox-message';
import { formatDateTime } from '../../../lib/format';

/** One message: headers and the plain-text body (the HTML part is not rendered, so nothing in it runs). */
export function MessageView({ id }: { id: string }) {
  const q = useOutboxMessage(id);
  if (q.isPending) return <ListSkeleton />;
  if (q.isError) return <ErrorNotice title="Could not load the message" error={q.error} onRetry={() => void q.refetch()} />;
  const m = q.data;
  return (
    <article aria-label="Message" className="rounded-lg border border-line p-4">
      <h2 className="mb-2 text-lg font-semibold text-ink">{m.subject || '(no subject)'}</h2>
      <dl className="mb-4 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
        <dt className="text-ink-muted">From</dt>
        <dd>{m.from}</dd>
        <dt className="text-ink-muted">To</dt>
        <dd>{m.to.join(', ')}</dd>
        <dt className="text-ink-muted">Received</dt>
        <dd className="num">{formatDateTime(m.receivedAt, { seconds: true })}</dd>
      </dl>
      <pre className="whitespace-pre-wrap break-words font-sans text-sm text-ink">{m.text || '(no text part)'}</pre>
    </article>
  );
}
