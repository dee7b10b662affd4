import type { OutboxSummary } from '../../../../shared/schemas/outbox';
import { cn } from '../../../lib/cn';
import { formatDateTime } from '../../../lib/format';

const when = (iso: string) => formatDateTime(iso);

/** The received messages, newest first; choosing one opens it. */
export function OutboxList({ messages, selectedId, onSelect }: { messages: OutboxSummary[]; selectedId: string | null; onSelect: (id: string) => void }) {
  return (
    <ul className="divide-y divide-line overflow-hidden rounded-lg border border-line" aria-label="Messages">
      {messages.map((m) => (
        <li key={m.id}>
          <button
            type="button"
            aria-current={m.id === selectedId ? 'true' : undefined}
            onClick={() => onSelect(m.id)}
            className={cn('block w-full px-3 py-2 text-left text-sm hover:bg-accent-soft', m.id === selectedId && 'bg-accent-soft')}
          >
            <span className="block truncate font-medium text-ink">{m.subject || '(no subject)'}</span>
            <span className="block truncate text-ink-muted">To {m.to.join(', ')}</span>
            <span className="num block text-xs text-ink-faint">{when(m.receivedAt)}</span>
          </button>
        </li>
      ))}
    </ul>
  );
}
