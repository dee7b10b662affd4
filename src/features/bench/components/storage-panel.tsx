import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { toast } from '../../../components/ui/toast';
import type { BenchStatus } from '../api/get-bench';
import { useAcknowledgeStorage, useStorageReview } from '../api/storage';
import { formatDateTime } from '../../../lib/format';

/** A time as the browser's locale writes it. */
const when = (iso: string) => formatDateTime(iso, { seconds: true });

/**
 * What was not stored as received: forwarded lines refused at the edge, samples the database
 * refused (quarantined, with the reason and the line with control characters shown escaped), and
 * damaged journal batches set aside at start-up. An admin or lead acknowledges them after review,
 * which lets the health check answer ok again; nothing is deleted.
 */
export function StoragePanel({ status, canAcknowledge }: { status: BenchStatus; canAcknowledge: boolean }) {
  const review = useStorageReview();
  const ack = useAcknowledgeStorage();
  const s = status.storage;
  const open = (s?.quarantined.unacknowledged ?? 0) + (s?.damagedBatches.unacknowledged ?? 0);
  const q = review.data?.quarantine;
  const damaged = review.data?.damaged ?? [];
  return (
    <section aria-label="Storage" data-testid="storage-panel" className="rounded-card border border-line bg-surface p-4 shadow-card">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h2 className="font-semibold text-ink">Storage</h2>
        <div className="flex items-center gap-2">
          {open > 0 ? (
            <Badge tone="danger" dot>
              Needs review
            </Badge>
          ) : (
            <Badge tone="ok" dot>
              Everything received is stored
            </Badge>
          )}
          {canAcknowledge && open > 0 && (
            <Button
              size="sm"
              variant="secondary"
              loading={ack.isPending}
              onClick={() =>
                ack.mutate(undefined, {
                  onSuccess: (r) => toast('Acknowledged', { tone: 'success', description: `${r.acknowledged.rows} quarantined sample(s), ${r.acknowledged.batches} damaged batch(es) marked as reviewed.` }),
                  onError: (e) => toast('Not acknowledged', { tone: 'error', description: e.message }),
                })
              }
            >
              Acknowledge after review
            </Button>
          )}
        </div>
      </div>
      <dl className="mt-3 grid grid-cols-3 gap-4 text-sm">
        <div>
          <dt className="text-ink-muted">Lines refused at the edge</dt>
          <dd className="num text-ink" data-testid="edge-refused">
            {s?.edgeRefused ?? 0}
          </dd>
        </div>
        <div>
          <dt className="text-ink-muted">Quarantined samples</dt>
          <dd className={s?.quarantined.unacknowledged ? 'num text-danger' : 'num text-ink'} data-testid="quarantined">
            {s?.quarantined.total ?? 0}
            {s?.quarantined.unacknowledged ? ` (${s.quarantined.unacknowledged} not reviewed)` : ''}
          </dd>
        </div>
        <div>
          <dt className="text-ink-muted">Damaged journal batches</dt>
          <dd className={s?.damagedBatches.unacknowledged ? 'num text-danger' : 'num text-ink'} data-testid="damaged-batches">
            {s?.damagedBatches.total ?? 0}
            {s?.damagedBatches.unacknowledged ? ` (${s.damagedBatches.unacknowledged} not reviewed)` : ''}
          </dd>
        </div>
      </dl>
      <p className="mt-2 text-sm text-ink-muted">
        Lines with control characters or over 256 characters are refused before they reach a run. A sample the database refuses is set aside with its reason, and the samples after it
        are stored; a damaged part of the journal is moved into its own file beside the journal, and every intact part is replayed.
      </p>
      {q && q.items.length > 0 && (
        <table className="mt-4 w-full text-sm" data-testid="quarantine-table">
          <caption className="mb-1 text-left font-semibold text-ink">Quarantined samples (newest first)</caption>
          <thead className="text-left text-ink-muted">
            <tr>
              <th className="py-1 pr-3 font-normal">Seq</th>
              <th className="py-1 pr-3 font-normal">Bench / device</th>
              <th className="py-1 pr-3 font-normal">Line as received</th>
              <th className="py-1 pr-3 font-normal">Reason</th>
              <th className="py-1 font-normal">Set aside</th>
            </tr>
          </thead>
          <tbody>
            {q.items.map((r) => (
              <tr key={r.seq} className="border-t border-line">
                <td className="num py-1 pr-3">{r.seq}</td>
                <td className="py-1 pr-3">
                  <span className="num">{r.benchId}</span> · {r.device}
                </td>
                <td className="num py-1 pr-3 break-all">{r.preview}</td>
                <td className="py-1 pr-3 break-all text-ink-muted">{r.reason}</td>
                <td className="py-1">
                  {when(r.at)} {r.acknowledgedAt ? <Badge tone="ok">Reviewed</Badge> : <Badge tone="warn">Not reviewed</Badge>}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {damaged.length > 0 && (
        <table className="mt-4 w-full text-sm" data-testid="damaged-table">
          <caption className="mb-1 text-left font-semibold text-ink">Damaged journal batches (files in the journal directory)</caption>
          <thead className="text-left text-ink-muted">
            <tr>
              <th className="py-1 pr-3 font-normal">File</th>
              <th className="py-1 pr-3 font-normal">Bytes</th>
              <th className="py-1 pr-3 font-normal">Reason</th>
              <th className="py-1 font-normal">Set aside</th>
            </tr>
          </thead>
          <tbody>
            {damaged.map((d) => (
              <tr key={d.file} className="border-t border-line">
                <td className="num py-1 pr-3 break-all">{d.file}</td>
                <td className="num py-1 pr-3">{d.bytes}</td>
                <td className="py-1 pr-3 text-ink-muted">{d.reason}</td>
                <td className="py-1">
                  {d.at ? when(d.at) : '—'} {d.acknowledgedAt ? <Badge tone="ok">Reviewed</Badge> : <Badge tone="warn">Not reviewed</Badge>}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}
