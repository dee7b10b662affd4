import type { OutboxMessage, OutboxSummary } from '../../shared/schemas/outbox';
import type { Db } from '../db/client';
import { mailRepository, type OutboxRow } from '../db/repositories/mail.repository';
import { instrumentRepository, jobRepository, standardRepository } from '../db/repositories/register.repository';
import { userRepository } from '../db/repositories/user.repository';
import { notFound } from '../errors';
import type { Mailer } from '../mail/mailer';
import type { StoredMail } from '../mail/stored-mail';
import { jobApprovedMail, jobAssignedMail, jobReturnedMail, jobSubmittedMail, standardsDueMail, weeklyDueListMail, type RenderedMail } from '../mail/templates';
import { addDays } from './dates';
import { createSiteClock } from './site-clock';
import { formatRange } from '../../shared/format';
import type { JobNotice } from './job.service';
import type { ReviewNotice } from './review.service';


const summary = (r: OutboxRow): OutboxSummary => ({ id: r.id, receivedAt: r.receivedAt.toISOString(), from: r.fromAddress, to: r.to, subject: r.subject });

/** Days ahead a standard counts as due soon (DESIGN.md §3 item 9). */
export const STANDARDS_DUE_WITHIN_DAYS = 30;

/**
 * Team mail: renders the templates for job and review events and the due lists, and hands them to
 * the mailer queue (which never throws for delivery); keeps the Outbox of the local fake SMTP server.
 */
export function createMailService(db: Db, deps: { mailer?: Mailer; appUrl: () => string; onError?: (err: unknown, what: string) => void }) {
  const outbox = mailRepository(db);
  const users = userRepository(db);
  const jobs = jobRepository(db);
  const instruments = instrumentRepository(db);
  const standards = standardRepository(db);
  const clock = createSiteClock(db);

  const send = (to: string[], m: RenderedMail) => {
    if (!deps.mailer || !to.length) return;
    deps.mailer.send({ to, subject: m.subject, text: m.text, html: m.html });
  };
  const leads = async () => (await users.list()).filter((u) => u.active && u.role === 'lead');
  async function jobFacts(jobId: string) {
    const job = await jobs.get(jobId);
    if (!job) return undefined;
    const inst = await instruments.get(job.instrumentId);
    const range = inst ? formatRange(inst.lrv, inst.urv, inst.unit) : undefined;
    return { job, base: { appUrl: deps.appUrl(), jobId, tag: job.tag, service: inst?.service || undefined, range, timeZone: await clock.zone() } };
  }
  /** Runs a mail step; a failure is reported and swallowed, so mail never fails the action. */
  const guard = async (what: string, fn: () => Promise<void>) => {
    try {
      await fn();
    } catch (err) {
      deps.onError?.(err, what);
    }
  };

  const service = {
    /** Keep a message the local fake SMTP server received. */
    async store(m: StoredMail): Promise<void> {
      await outbox.insert({
        id: m.id,
        receivedAt: new Date(m.receivedAt),
        fromAddress: m.from,
        to: m.to,
        subject: m.subject,
        text: m.text,
        html: m.html ?? null,
        messageId: m.messageId ?? null,
        raw: m.raw,
      });
    },
    async list(limit = 200): Promise<OutboxSummary[]> {
      return (await outbox.list(limit)).map(summary);
    },
    async get(id: string): Promise<OutboxMessage> {
      const r = await outbox.get(id);
      if (!r) throw notFound('No such message');
      return { ...summary(r), text: r.text, html: r.html, messageId: r.messageId };
    },

    /** Assignment → the assignee; submission → the leads. */
    onJob: (n: JobNotice) =>
      guard(`job.${n.kind}`, async () => {
        const f = await jobFacts(n.jobId);
        if (!f) return;
        if (n.kind === 'assigned') {
          const u = await users.findById(n.assigneeId);
          if (!u?.active) return;
          send([u.email], jobAssignedMail({ ...f.base, recipientName: u.name, assignedBy: n.byName, dueDate: f.job.dueOn, permitNumber: f.job.permitNo ?? undefined, note: f.job.notes || undefined }));
        } else {
          for (const l of await leads()) send([l.email], jobSubmittedMail({ ...f.base, recipientName: l.name, submittedBy: n.byName, submittedAt: n.at, ...(n.reply ? { reply: n.reply } : {}) }));
        }
      }),

    /** Return and approval → the assignee. */
    onReview: (n: ReviewNotice) =>
      guard(`review.${n.kind}`, async () => {
        if (n.kind === 'revision-opened') return;
        const f = await jobFacts(n.jobId);
        if (!f?.job.assigneeId) return;
        const u = await users.findById(f.job.assigneeId);
        if (!u?.active) return;
        const s = n.signature;
        send(
          [u.email],
          n.kind === 'approved'
            ? jobApprovedMail({ ...f.base, recipientName: u.name, approvedBy: s.signerName, approvedAt: s.signedAt, meaning: s.meaning })
            : jobReturnedMail({ ...f.base, recipientName: u.name, returnedBy: s.signerName, returnedAt: s.signedAt, comment: s.comment || '(no comment)' }),
        );
      }),

    /** Standards due within 30 days (or past due) → the leads; nothing is sent when none are. Returns how many were listed. */
    async standardsDue(on?: string): Promise<number> {
      let n = 0;
      const today = on ?? (await clock.today());
      await guard('standards.due', async () => {
        const horizon = addDays(today, STANDARDS_DUE_WITHIN_DAYS);
        const due = (await standards.all()).filter((s) => s.dueOn <= horizon);
        n = due.length;
        if (!due.length) return;
        for (const l of await leads())
          send(
            [l.email],
            standardsDueMail({
              appUrl: deps.appUrl(),
              recipientName: l.name,
              asOf: today,
              withinDays: STANDARDS_DUE_WITHIN_DAYS,
              standards: due.map((s) => ({ description: s.description, serial: s.serial, certificateNumber: s.certificateNo, dueDate: s.dueOn })),
            }),
          );
      });
      return n;
    },

    /** The weekly list of open jobs due within the coming week or overdue → the leads. Returns how many were listed. */
    async weeklyDueList(on?: string): Promise<number> {
      let n = 0;
      const today = on ?? (await clock.today());
      await guard('jobs.weekly-due', async () => {
        const horizon = addDays(today, 7);
        const services = new Map((await instruments.all()).map((i) => [i.id, i.service]));
        const items = (await jobs.list())
          .filter((j) => j.status !== 'approved' && j.dueOn <= horizon)
          .map((j) => ({ tag: j.tag, service: services.get(j.instrumentId) || undefined, jobId: j.id, dueDate: j.dueOn, overdue: j.dueOn < today, assignee: j.assigneeName ?? undefined }));
        n = items.length;
        for (const l of await leads()) send([l.email], weeklyDueListMail({ appUrl: deps.appUrl(), recipientName: l.name, weekOf: today, items }));
      });
      return n;
    },
  };
  return service;
}
export type MailService = ReturnType<typeof createMailService>;
