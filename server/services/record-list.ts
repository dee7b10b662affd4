/**
 * The Records list: submitted and approved jobs with their last signature, revision count,
 * calibration date (in the site's zone) and as-found / as-left decisions.
 */
import type { Db } from '../db/client';
import { reviewRepository, type SignatureRow } from '../db/repositories/review.repository';
import { dateInZone } from '../../shared/format/dates';
import type { RecordItem } from '../../shared/schemas/records';
import { toJob } from './job.service';
import { createSiteClock } from './site-clock';
import { toSignature } from './review-rows';

export function createRecordList(db: Db) {
  const repo = reviewRepository(db);
  const clock = createSiteClock(db);
  return {
    /**
     * Submitted and approved jobs with their last signature, number of revisions, calibration date
     * and as-found / as-left results; newest calibration first (a record awaiting review sorts by
     * its calibration date like any other). `from`/`to` filter on the calibration date.
     */
    async records(opts: { status: 'approved' | 'submitted' | 'all'; q?: string; from?: string; to?: string }): Promise<RecordItem[]> {
      const rows = await repo.records(opts);
      const ids = rows.map((r) => r.id);
      const [sigs, counts, finished, zone] = await Promise.all([repo.signaturesFor(ids), repo.revisionCounts(ids), repo.finishedRunsFor(ids), clock.zone()]);
      const last = new Map<string, SignatureRow>();
      for (const s of sigs) last.set(s.jobId, s);
      const items = rows.map((r) => {
        const mine = finished.filter((x) => x.jobId === r.id);
        const found = mine.filter((x) => x.kind === 'as-found').at(-1);
        const left = mine.filter((x) => x.kind === 'as-left').at(-1);
        const dated = left ?? found;
        return {
          ...toJob(r),
          lastSignature: last.has(r.id) ? toSignature(last.get(r.id)!) : null,
          revisions: counts.get(r.id) ?? 0,
          // The calibration date in the site's zone, as the signature's calibration date is taken.
          calibratedOn: dated ? dateInZone(dated.endedAt ?? dated.startedAt, zone) : null,
          asFound: found?.decision ?? null,
          asLeft: left?.decision ?? null,
        };
      });
      return items
        .filter((x) => (!opts.from || (x.calibratedOn !== null && x.calibratedOn >= opts.from)) && (!opts.to || (x.calibratedOn !== null && x.calibratedOn <= opts.to)))
        .sort((a, b) => (b.calibratedOn ?? b.updatedAt).localeCompare(a.calibratedOn ?? a.updatedAt) || b.updatedAt.localeCompare(a.updatedAt));
    },
  };
}
