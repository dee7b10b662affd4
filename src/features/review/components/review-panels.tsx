import type { ReactNode } from 'react';
import type { Checklist, JobDetail } from '../../../../shared/schemas/jobs';
import type { AuditEntry, ReviewExchange, RevisionSummary, Signature } from '../../../../shared/schemas/records';
import { AttachmentList, PHOTO } from '../../../components/ui/attachments';
import { Badge } from '../../../components/ui/badge';
import { fileUrl } from '../../../lib/attachments';
import { daysUntil, formatDateTime } from '../../../lib/format';

export function Panel({ title, children, testId }: { title: string; children: ReactNode; testId?: string }) {
  return (
    <section className="rounded-card border border-line bg-surface p-4 shadow-card" aria-label={title} data-testid={testId}>
      <h2 className="mb-3 text-sm font-semibold tracking-wide text-ink-muted">{title}</h2>
      {children}
    </section>
  );
}

const when = (iso: string) => formatDateTime(iso);

/** Standards used, with their due dates and state at review time. */
export function StandardsUsed({ job }: { job: JobDetail }) {
  if (!job.standards.length) return <p className="text-sm text-ink-muted">No standards were chosen.</p>;
  return (
    <ul className="flex flex-col gap-2 text-sm">
      {job.standards.map((s) => {
        const d = daysUntil(s.dueOn);
        return (
          <li key={s.id} className="flex flex-col gap-0.5">
            <span className="font-medium">{s.description}</span>
            <span className="text-ink-muted">
              <span className="num">{s.serial}</span> · cert. <span className="num">{s.certificateNo}</span> · due <span className="num">{s.dueOn}</span>{' '}
              <Badge tone={s.dueState === 'expired' ? 'danger' : s.dueState === 'due-soon' ? 'warn' : 'ok'} dot>
                {s.dueState === 'expired' ? 'Expired' : s.dueState === 'due-soon' ? `Due in ${d} d` : 'In date'}
              </Badge>
            </span>
            {s.certificateFileId ? (
              <a className="text-accent hover:underline" href={fileUrl(s.certificateFileId)} target="_blank" rel="noreferrer" data-testid="certificate-link">
                Open the certificate
              </a>
            ) : (
              <span className="text-xs text-ink-muted">No certificate file uploaded</span>
            )}
            {s.problem && <span className="text-danger">{s.problem}</span>}
          </li>
        );
      })}
    </ul>
  );
}

const STEPS: Array<[keyof Checklist, string]> = [
  ['operatorsInformed', 'Operators informed'],
  ['isolated', 'Isolated from the process'],
  ['vented', 'Vented and drained'],
  ['flushed', 'Flushed'],
  ['returnedToService', 'Returned to service'],
];

/** The preparation checklist with who did each step and when. */
export function ChecklistSummary({ checklist }: { checklist: Checklist }) {
  const b = checklist.bypass;
  return (
    <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1.5 text-sm">
      <dt className="text-ink-muted">Permit to work</dt>
      <dd className="num">{checklist.permitNo ?? '—'}</dd>
      <dt className="text-ink-muted">Interlock bypass</dt>
      <dd>
        {b.required ? (
          <>
            {b.description}
            <br />
            <span className="text-xs text-ink-muted">
              {b.recorded ? `on by ${b.recorded.byName}, ${when(b.recorded.at)}` : 'not recorded'} · {b.removed ? `off by ${b.removed.byName}, ${when(b.removed.at)}` : 'removal not recorded'}
            </span>
          </>
        ) : (
          'Not needed'
        )}
      </dd>
      {STEPS.map(([k, label]) => {
        const s = checklist[k] as { byName: string; at: string } | null;
        return [
          <dt key={`${k}-t`} className="text-ink-muted">
            {label}
          </dt>,
          <dd key={`${k}-d`}>{s ? `${s.byName}, ${when(s.at)}` : <span className="text-ink-faint">—</span>}</dd>,
        ];
      })}
    </dl>
  );
}

export function SignatureList({ signatures }: { signatures: Signature[] }) {
  if (!signatures.length) return <p className="text-sm text-ink-muted">Not signed yet.</p>;
  return (
    <ol className="flex flex-col gap-2 text-sm" data-testid="signatures">
      {signatures.map((s) => (
        <li key={s.id} className="rounded-md border border-line px-3 py-2">
          <div className="flex items-center justify-between gap-2">
            <strong>{s.signerName}</strong>
            <Badge tone={s.decision === 'approve' ? 'ok' : 'warn'}>{s.meaning}</Badge>
          </div>
          <div className="text-xs text-ink-muted">
            Revision {s.revision} · <span className="num">{when(s.signedAt)}</span> · {s.signerEmail}
          </div>
          {s.comment && <p className="mt-1">{s.comment}</p>}
          <div className="num mt-1 truncate text-[11px] text-ink-faint" title={`Record hash ${s.recordHash}`}>
            sha256 {s.recordHash.slice(0, 16)}…
          </div>
        </li>
      ))}
    </ol>
  );
}

export function RevisionList({ revisions, onOpen }: { revisions: RevisionSummary[]; onOpen: (revision: number) => void }) {
  if (!revisions.length) return <p className="text-sm text-ink-muted">This is the first revision.</p>;
  return (
    <ul className="flex flex-col gap-2 text-sm">
      {revisions.map((r) => (
        <li key={r.revision}>
          <button type="button" className="font-medium text-accent hover:underline" onClick={() => onOpen(r.revision)}>
            Revision {r.revision}
          </button>{' '}
          <span className="text-ink-muted">
            superseded {when(r.createdAt)} by {r.createdByName}: “{r.reason}”
          </span>
        </li>
      ))}
    </ul>
  );
}

/**
 * The return loop of this job: each return with the lead's comment, and the technician's reply on
 * resubmission, oldest first.
 */
export function ReturnExchanges({ exchanges }: { exchanges: ReviewExchange[] }) {
  return (
    <ol className="flex flex-col gap-3 text-sm" data-testid="review-exchanges">
      {exchanges.map((x, i) => (
        <li key={x.signatureId} className="rounded-md border border-line px-3 py-2" data-testid="exchange">
          <div className="text-xs text-ink-muted">
            Round {i + 1} · revision {x.revision}
          </div>
          <p className="mt-1">
            <strong>{x.returnedBy}</strong> returned it <span className="num text-xs text-ink-muted">{when(x.returnedAt)}</span>
          </p>
          <blockquote className="mt-1 border-l-2 border-warn pl-3 whitespace-pre-wrap" data-testid="exchange-comment">
            {x.comment || 'No comment was given.'}
          </blockquote>
          {x.reply ? (
            <>
              <p className="mt-2">
                <strong>{x.reply.byName}</strong> replied on resubmission <span className="num text-xs text-ink-muted">{when(x.reply.at)}</span>
              </p>
              <blockquote className="mt-1 border-l-2 border-accent pl-3 whitespace-pre-wrap" data-testid="exchange-reply">
                {x.reply.text}
              </blockquote>
            </>
          ) : (
            <p className="mt-2 text-ink-muted">No reply yet.</p>
          )}
        </li>
      ))}
    </ol>
  );
}

/** The job's as-found photos, to look at (read-only here). */
export function ReviewPhotos({ jobId }: { jobId: string }) {
  return <AttachmentList target={{ entity: 'job', id: jobId }} spec={PHOTO} canUpload={false} canRemove={false} emptyText="No as-found photos." testId="review-photos" />;
}

/** The job's audit trail in words, oldest first, with old → new values on request. */
export function AuditTrailList({ entries }: { entries: AuditEntry[] }) {
  if (!entries.length) return <p className="text-sm text-ink-muted">No events.</p>;
  return (
    <ol className="flex max-h-96 flex-col gap-1 overflow-y-auto text-sm" data-testid="job-audit">
      {entries.map((e) => (
        <li key={e.id} className="border-b border-line py-1 last:border-0">
          <details>
            <summary className="cursor-pointer">
              <span className="num text-xs text-ink-muted">{when(e.at)}</span> <span className="font-medium">{e.summary ?? e.action}</span>
              {e.subject && <span className="text-ink-muted"> · {e.subject}</span>}{' '}
              <span className="text-ink-muted">— {e.actorName ?? e.actorEmail ?? 'Stillpoint (automatic)'}</span>
            </summary>
            <div className="mt-1 grid gap-2 sm:grid-cols-2">
              <pre className="num overflow-x-auto rounded bg-sunken p-2 text-[11px]">{JSON.stringify(e.before, null, 1) ?? 'null'}</pre>
              <pre className="num overflow-x-auto rounded bg-sunken p-2 text-[11px]">{JSON.stringify(e.after, null, 1) ?? 'null'}</pre>
            </div>
          </details>
        </li>
      ))}
    </ol>
  );
}
