import type { ReturnNotice } from '../../../../shared/schemas/jobs';
import { formatDateTime } from '../../../lib/format';


/** The lead's return, shown at the top of the job page until the job is resubmitted. */
export function ReturnNoticeBanner({ notice }: { notice: ReturnNotice }) {
  return (
    <section
      aria-label="Returned by the lead"
      className="mb-5 rounded-card border border-warn/50 bg-warn-soft px-4 py-3 text-ink"
      data-testid="return-notice"
    >
      <h2 className="text-sm font-semibold">
        Returned by {notice.byName} on <span className="num">{formatDateTime(notice.at)}</span>
      </h2>
      <blockquote className="mt-1 border-l-2 border-warn pl-3 whitespace-pre-wrap" data-testid="return-comment">
        {notice.comment || 'No comment was given.'}
      </blockquote>
      <p className="mt-2 text-sm text-ink-muted">
        Address the comment, then submit again below; your reply goes to the lead with the submission.{' '}
        <a href="#submit-reply" className="text-accent underline-offset-2 hover:underline">
          Reply and resubmit
        </a>
      </p>
    </section>
  );
}
