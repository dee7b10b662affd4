import { Link } from 'react-router';
import type { InboxItem } from '../../../../shared/schemas/records';
import { Badge } from '../../../components/ui/badge';
import { formatDateTime } from '../../../lib/format';


/** Days between a submission and now, in words ("today", "3 days"). */
function waited(iso: string, now = Date.now()): string {
  const d = Math.floor((now - Date.parse(iso)) / 86_400_000);
  return d <= 0 ? 'less than a day' : d === 1 ? '1 day' : `${d} days`;
}

/** Jobs awaiting review, oldest submission first: the lead's desk. */
export function InboxList({ items }: { items: InboxItem[] }) {
  if (!items.length) return <p className="text-ink-muted">Nothing is waiting for review.</p>;
  return (
    <ol className="flex flex-col divide-y divide-line rounded-card border border-line bg-surface shadow-card" aria-label="Awaiting review, oldest first" data-testid="review-inbox">
      {items.map((j) => (
        <li key={j.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 px-4 py-3" data-testid="inbox-item" data-tag={j.tag}>
          <Link to={`/jobs/${j.id}/review`} className="num font-semibold text-accent hover:underline">
            {j.tag}
          </Link>
          <span className="min-w-0 flex-1 text-sm text-ink-muted">
            {j.service} · by {j.assigneeName ?? '—'} · revision {j.revision}
          </span>
          {j.returns > 0 && <Badge tone="warn">{j.returns === 1 ? 'resubmitted after a return' : `resubmitted after ${j.returns} returns`}</Badge>}
          <span className="text-sm">
            submitted <span className="num">{formatDateTime(j.submittedAt)}</span> <span className="text-ink-muted">(waiting {waited(j.submittedAt)})</span>
          </span>
        </li>
      ))}
    </ol>
  );
}
