import { Cron } from 'croner';
import type { Db } from '../db/client';
import { mailRepository } from '../db/repositories/mail.repository';
import type { MailService } from './mail.service';

/** One scheduled mail: a croner pattern (read in `timezone`) and what it sends. */
export interface MailSchedule {
  name: string;
  /** Croner pattern: minute hour day-of-month month day-of-week. */
  pattern: string;
  send: (mail: MailService) => Promise<unknown>;
}

/**
 * The scheduled mails: standards due within 30 days every day at 06:00, the weekly due list on
 * Mondays at 06:00 (our own choice of hours: before the morning's work is handed out).
 */
export const MAIL_SCHEDULES: readonly MailSchedule[] = [
  { name: 'standards-due', pattern: '0 6 * * *', send: (m) => m.standardsDue() },
  { name: 'weekly-due-list', pattern: '0 6 * * 1', send: (m) => m.weeklyDueList() },
];

export interface MailSchedulerOptions {
  /** IANA time zone the patterns are read in. Default 'UTC'. */
  timezone?: string;
  /** The clock (tests). Default `() => new Date()`. */
  now?: () => Date;
  schedules?: readonly MailSchedule[];
  onError?: (err: unknown, schedule: string) => void;
}

/**
 * Scheduled mail by croner, with each schedule's last slot kept in the database. A slot is a
 * schedule's most recent due time; it is claimed (moved forward in one statement) before the mail
 * goes, so a slot is sent at most once across restarts and across servers sharing the database.
 * At start the latest slot already due is sent if it never was (a server that was down at 06:00
 * sends it when it comes back), and nothing is sent again after a restart.
 */
export function createMailScheduler(db: Db, mail: MailService, opts: MailSchedulerOptions = {}) {
  const repo = mailRepository(db);
  const now = opts.now ?? (() => new Date());
  const timezone = opts.timezone ?? 'UTC';
  const schedules = opts.schedules ?? MAIL_SCHEDULES;
  const jobs: Cron[] = [];
  let chain: Promise<unknown> = Promise.resolve();

  /** The most recent due time of `s` at or before `at`, or undefined. */
  function latestSlot(s: MailSchedule, at: Date): Date | undefined {
    const probe = new Cron(s.pattern, { timezone, paused: true });
    try {
      // previousRuns looks strictly before its reference; a slot due exactly now counts as due.
      return probe.previousRuns(1, new Date(at.getTime() + 1000))[0];
    } finally {
      probe.stop();
    }
  }

  /** Sends every schedule whose latest slot has not been sent; returns the names sent. */
  async function runDue(): Promise<string[]> {
    const sent: string[] = [];
    for (const s of schedules) {
      try {
        const at = now();
        const slot = latestSlot(s, at);
        if (!slot || !(await repo.claimSlot(s.name, slot, at))) continue;
        await s.send(mail);
        sent.push(s.name);
      } catch (err) {
        opts.onError?.(err, s.name);
      }
    }
    return sent;
  }

  const queue = () => (chain = chain.then(runDue, runDue));

  return {
    /** Sends what is due and not yet sent, then starts the timers. Resolves once the catch-up ran. */
    async start(): Promise<string[]> {
      const first = queue() as Promise<string[]>;
      for (const s of schedules) jobs.push(new Cron(s.pattern, { timezone, unref: true, protect: true }, () => void queue()));
      return first;
    },
    runDue: () => queue() as Promise<string[]>,
    /** Stops the timers and waits for a send in progress. */
    async stop(): Promise<void> {
      for (const j of jobs) j.stop();
      jobs.length = 0;
      await chain.catch(() => {});
    },
  };
}
export type MailScheduler = ReturnType<typeof createMailScheduler>;
