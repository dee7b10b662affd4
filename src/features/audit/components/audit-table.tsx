import { Fragment, useState } from 'react';
import type { AuditEntry } from '../../../../shared/schemas/records';
import { cn } from '../../../lib/cn';
import { formatDateTime, siteTimeZone } from '../../../lib/format';

/** Changed keys between two JSON values (top level), for a quick old → new reading. */
function changedKeys(before: unknown, after: unknown): string[] {
  if (!before || !after || typeof before !== 'object' || typeof after !== 'object') return [];
  const a = before as Record<string, unknown>;
  const b = after as Record<string, unknown>;
  return [...new Set([...Object.keys(a), ...Object.keys(b)])].filter((k) => JSON.stringify(a[k]) !== JSON.stringify(b[k]));
}

/** Entities named by a tag (set in the numeric face like every tag). */
const ENTITY_NUMERIC = new Set(['job', 'run', 'instrument']);
const ENTITY_WORDS: Record<string, string> = { job: 'Job', run: 'Run', instrument: 'Instrument', standard: 'Standard', user: 'User', site: 'Site', bench: 'Bench', 'sample-storage': 'Sample storage' };

/**
 * The audit trail in words: when (site time), who by name, what happened, which record by its tag,
 * and old → new values on demand. On a phone each entry reads as a block (number and time, who,
 * what happened, record and changes) rather than a table scrolled sideways inside its frame.
 */
export function AuditTable({ entries, brokenId }: { entries: AuditEntry[]; brokenId?: number | undefined }) {
  const [open, setOpen] = useState<number | null>(null);
  return (
    <div className="relative overflow-x-auto rounded-card border border-line bg-surface shadow-card">
      <table className="w-full text-sm max-sm:block" aria-label="Audit trail">
        <thead className="bg-sunken/60 text-left text-xs tracking-wide text-ink-muted max-sm:sr-only">
          <tr>
            <th className="px-3 py-2">#</th>
            <th className="px-3 py-2">When ({siteTimeZone()})</th>
            <th className="px-3 py-2">Who</th>
            <th className="px-3 py-2">What happened</th>
            <th className="px-3 py-2">Record</th>
            <th className="px-3 py-2">Changed</th>
          </tr>
        </thead>
        <tbody className="max-sm:block">
          {entries.map((e) => {
            const keys = changedKeys(e.before, e.after);
            return (
              <Fragment key={e.id}>
                <tr className={cn('border-t border-line max-sm:flex max-sm:flex-wrap max-sm:gap-x-3 max-sm:gap-y-1 max-sm:px-3 max-sm:py-2', e.id === brokenId && 'bg-danger-soft')} data-testid={`audit-row-${e.id}`}>
                  <td className="num px-3 py-2 max-sm:p-0 max-sm:text-ink-muted"><span className="sm:hidden">#</span>{e.id}</td>
                  <td className="num px-3 py-2 whitespace-nowrap max-sm:p-0 max-sm:text-ink-muted">{formatDateTime(e.at, { seconds: true })}</td>
                  <td className="px-3 py-2 max-sm:basis-full max-sm:p-0">
                    {e.actorName ?? e.actorEmail ?? <span className="text-ink-muted">Stillpoint (automatic)</span>}
                    {e.actorName && e.actorEmail && e.actorEmail.includes('@') && !e.actorName.includes(e.actorEmail) && <span className="block text-xs text-ink-muted">{e.actorEmail}</span>}
                  </td>
                  <td className="px-3 py-2 font-medium max-sm:basis-full max-sm:p-0" title={e.action}>
                    {e.summary ?? e.action}
                  </td>
                  <td className="px-3 py-2 max-sm:p-0">
                    {e.subject ? (
                      <span className={ENTITY_NUMERIC.has(e.entity) ? 'num' : undefined}>{e.subject}</span>
                    ) : (
                      <>
                        {ENTITY_WORDS[e.entity] ?? e.entity}
                        {e.entityId && <span className="num ml-1 text-xs text-ink-muted">{e.entityId.slice(0, 8)}</span>}
                      </>
                    )}
                  </td>
                  <td className="px-3 py-2 max-sm:p-0">
                    <button type="button" className="text-accent hover:underline" onClick={() => setOpen(open === e.id ? null : e.id)} aria-expanded={open === e.id}>
                      {keys.length ? keys.slice(0, 4).join(', ') + (keys.length > 4 ? '…' : '') : e.before == null && e.after != null ? 'new values' : 'details'}
                    </button>
                  </td>
                </tr>
                {open === e.id && (
                  <tr className="bg-sunken/40 max-sm:block">
                    <td colSpan={6} className="px-3 py-2 max-sm:block">
                      <div className="grid gap-2 md:grid-cols-2">
                        <div>
                          <div className="text-xs text-ink-muted">Before</div>
                          <pre className="num max-h-64 overflow-auto rounded bg-surface p-2 text-[11px]">{JSON.stringify(e.before, null, 2) ?? 'null'}</pre>
                        </div>
                        <div>
                          <div className="text-xs text-ink-muted">After</div>
                          <pre className="num max-h-64 overflow-auto rounded bg-surface p-2 text-[11px]">{JSON.stringify(e.after, null, 2) ?? 'null'}</pre>
                        </div>
                      </div>
                      <div className="num mt-1 truncate text-[11px] text-ink-faint">hash {e.hash} ← {e.prevHash}</div>
                    </td>
                  </tr>
                )}
              </Fragment>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}
