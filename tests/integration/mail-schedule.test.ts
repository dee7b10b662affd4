/**
 * Scheduled mail (issue 13, item 12): croner schedules whose last slot is kept in the database, so
 * restarting the server sends no scheduled mail twice; the weekly due list fills every column.
 * Real server starts over one data directory, with the local fake SMTP server and its Outbox. The
 * data directory starts as the migrated, seeded template (tests/helpers/db-template.ts: the same
 * migrations and seed a first start runs, no mail sent and no slot claimed), so the first start
 * does not seed two years of demo history again; what it sends is still its own.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { boot, type Running } from '../../server/boot';
import { parseEnv } from '../../server/env';
import { createLogger } from '../../server/logger';
import { createMailScheduler, MAIL_SCHEDULES } from '../../server/services/mail-schedule.service';
import type { MailService } from '../../server/services/mail.service';
import { seedDataDir } from '../helpers/db-template';
import { DEMO_PASSWORD } from '../helpers/test-server';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'sp-mail-schedule-'));
let running: Running | undefined;

afterAll(async () => {
  await running?.close();
  fs.rmSync(dir, { recursive: true, force: true });
});

async function start(): Promise<Running> {
  if (!fs.existsSync(path.join(dir, 'pglite'))) await seedDataDir(dir, DEMO_PASSWORD);
  const env = parseEnv({ NODE_ENV: 'test', PORT: '0', HOST: '127.0.0.1', LOG_LEVEL: 'silent', DATA_DIR: dir, DATABASE_URL: '' });
  running = await boot({ env, logger: createLogger(env.LOG_LEVEL) });
  return running;
}

async function stop(r: Running): Promise<void> {
  await r.close();
  running = undefined;
}

const scheduledSubject = (s: string) => /^Standards due within \d+ days/.test(s) || /^Week of /.test(s);

describe('scheduled mail across restarts', { skip: !!process.env.TEST_DATABASE_URL }, () => {
  it('the first start sends each due schedule once; two restarts over the same data send nothing again', async () => {
    const first = await start();
    expect((await first.scheduledMail).sort()).toEqual(['standards-due', 'weekly-due-list']);
    await stop(first); // the mailer is drained into the Outbox before the database closes

    const second = await start();
    const afterFirst = (await second.mail.list()).filter((m) => scheduledSubject(m.subject));
    // One of each per lead (the demo site has one lead).
    expect(afterFirst.filter((m) => m.subject.startsWith('Week of'))).toHaveLength(1);
    expect(afterFirst.filter((m) => m.subject.startsWith('Standards due'))).toHaveLength(1);
    expect(await second.scheduledMail).toEqual([]);
    await stop(second);

    const third = await start();
    expect(await third.scheduledMail).toEqual([]);
    const after = (await third.mail.list()).filter((m) => scheduledSubject(m.subject));
    expect(after.map((m) => m.id).sort()).toEqual(afterFirst.map((m) => m.id).sort());

    // The weekly due list: every row names its service (the instrument's), none left empty.
    const weekly = await third.mail.get(afterFirst.find((m) => m.subject.startsWith('Week of'))!.id);
    const due = (await third.services.jobs.list({ id: 'x', role: 'lead' } as never)).filter((j) => j.status !== 'approved');
    const listed = due.filter((j) => weekly.text.includes(j.tag));
    expect(listed.length).toBeGreaterThan(0);
    for (const j of listed) {
      const inst = await third.services.registers.instruments.get(j.instrumentId);
      expect(inst.service).not.toBe('');
      expect(weekly.html).toContain(inst.service);
    }
    await stop(third);
  }, 300_000);

  it('a schedule sends its slot once, and the next slot when it comes (injected clock, real database)', async () => {
    const r = await start();
    await r.scheduledMail;
    const sent: string[] = [];
    const fake = { standardsDue: async () => void sent.push('standards'), weeklyDueList: async () => void sent.push('weekly') } as unknown as MailService;
    // Tuesday 2031-01-07 05:00 UTC: a week after anything the server itself claimed.
    let clock = new Date('2031-01-07T05:00:00Z');
    const s = createMailScheduler(r.database.db, fake, { now: () => clock, schedules: MAIL_SCHEDULES });
    expect(await s.runDue()).toEqual(['standards-due', 'weekly-due-list']); // Monday's weekly slot and Monday's 06:00 standards slot
    expect(await s.runDue()).toEqual([]);
    clock = new Date('2031-01-07T06:00:00Z'); // Tuesday's standards slot falls due
    expect(await s.runDue()).toEqual(['standards-due']);
    clock = new Date('2031-01-08T05:59:00Z');
    expect(await s.runDue()).toEqual([]);
    clock = new Date('2031-01-13T06:00:30Z'); // the next Monday
    expect(await s.runDue()).toEqual(['standards-due', 'weekly-due-list']);
    // A second scheduler on the same database (another server) finds the slots taken.
    const other = createMailScheduler(r.database.db, fake, { now: () => clock });
    expect(await other.runDue()).toEqual([]);
    expect(sent).toEqual(['standards', 'weekly', 'standards', 'standards', 'weekly']);
    await s.stop();
    await other.stop();
    await stop(r);
  }, 300_000);
});
