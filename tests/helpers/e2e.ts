/**
 * The set-up every end-to-end file shares: the real app (in-memory, from the seeded template) and
 * Debian's Chromium for the file, API clients signed in as demo users, sign-in through the login
 * page, a job made ready for a run, and a mail read from the Outbox.
 */
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll } from 'vitest';
import { completeChecklist, demoStandards, passingAsFound } from '../integration/records-helpers';
import { launchBrowser } from './browser';
import { ApiClient, DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from './test-server';

/**
 * Speed factor of the simulated rig's autopilot in the end-to-end files: the pump's time constant is
 * divided by it (1.5 s → 0.125 s), so the pressure reaches each point sooner. The holds are not sped
 * up (HOLD_SECONDS, real time) and every point still runs the whole path — pre-position, approach from
 * the correct side, settle, hold, capture — so this shortens only the pump's travel.
 */
export const AUTOPILOT_SPEED = 12;

export type DemoUser = 'tech' | 'tech2' | 'lead' | 'admin' | 'auditor';

export interface E2eApp {
  server: TestServer;
  browser: Browser;
  /** API clients signed in as the demo users asked for. */
  api: Record<DemoUser, ApiClient>;
}

/**
 * Registers the file's `beforeAll` (app with `env`, Chromium, API clients of `users` signed in) and
 * `afterAll` (browser, then app, closed). The returned object is filled in before the first test.
 */
export function e2eApp(o: { env?: Record<string, string>; users?: DemoUser[] } = {}): E2eApp {
  const app = { api: {} } as E2eApp;
  beforeAll(async () => {
    // The server's errors reach the lane's output (a capture that could not be stored says so there).
    app.server = await startTestServer({ env: { LOG_LEVEL: 'error', ...o.env } });
    app.browser = await launchBrowser();
    for (const who of o.users ?? []) {
      app.api[who] = new ApiClient(app.server.url);
      await app.api[who].login(demoEmail(who));
    }
  });
  afterAll(async () => {
    await app.browser?.close();
    await app.server?.close();
  });
  return app;
}

/** Signs in on the login page as a demo user (or any email with the demo password) and waits for the navigation. */
export async function signIn(page: Page, base: string, who: DemoUser | `${string}@${string}`): Promise<void> {
  await page.goto(`${base}/login`);
  await page.getByLabel('Email').fill(who.includes('@') ? who : demoEmail(who as DemoUser));
  await page.getByLabel('Password').fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByTestId('nav-records').or(page.getByTestId('nav-queue')).first().waitFor();
}

/**
 * Makes a job of `tag` ready for a run as its technician, through the API: the in-date 0–100 kPa
 * pressure standard and a current standard, the permit, no bypass, operators informed, isolated,
 * vented. Returns the job's id.
 */
export async function readyForRun(tech: ApiClient, permitNo: string, tag = 'FT-101'): Promise<string> {
  const job = ((await tech.get('/api/jobs')).body.items as { id: string; tag: string }[]).find((j) => j.tag === tag);
  if (!job) throw new Error(`no job for ${tag}`);
  const stds = ((await tech.get('/api/standards')).body.items as { id: string; kind: string; rangeMax: number; dueState: string }[]).filter((s) => s.dueState !== 'expired');
  const p = stds.find((s) => s.kind === 'pressure' && s.rangeMax <= 100);
  const c = stds.find((s) => s.kind === 'current');
  if (!p || !c) throw new Error('no in-date pressure and current standards in the demo register');
  const r = await tech.req('PUT', `/api/jobs/${job.id}/checklist`, { standardIds: [p.id, c.id], permitNo, bypass: { required: false, description: '' }, operatorsInformed: true, isolated: true, vented: true });
  if (r.status !== 200 || (r.body.blockers as string[]).length) throw new Error(`${tag} not ready for a run: ${r.status} ${JSON.stringify(r.body)}`);
  return job.id;
}

/**
 * The technician's open FT-101 job with its checklist complete (the demo's in-date standards) and,
 * with `asFound`, a passing as-found run written to the database (with its raw trace on `trace`):
 * ready to submit. Needs the `tech` API client.
 */
export async function checklistDone(app: E2eApp, o: { asFound?: boolean; trace?: boolean } = {}): Promise<{ jobId: string; techId: string; pressureSerial: string }> {
  const tech = app.api.tech;
  const techId = ((await tech.get('/api/auth/me')).body as { id: string }).id;
  const jobs = (await tech.get('/api/jobs')).body.items as { id: string; tag: string; status: string }[];
  const jobId = jobs.find((j) => j.tag === 'FT-101' && j.status !== 'approved')!.id;
  const s = await demoStandards(app.server);
  await completeChecklist(tech, jobId, [s.pressure.id, s.current.id]);
  if (o.asFound) await passingAsFound(app.server, jobId, 'FT-101', techId, { trace: o.trace });
  return { jobId, techId, pressureSerial: s.pressure.serial };
}

/** Waits (polling the Outbox as admin) for a message to `to` whose subject matches; returns its text. */
export async function outboxText(admin: ApiClient, subject: RegExp, to: string, timeoutMs = 30_000): Promise<string> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const items = (await admin.get('/api/outbox')).body.items as { id: string; subject: string; to: string[] }[];
    const hit = items.find((m) => subject.test(m.subject) && m.to.includes(to));
    if (hit) return (await admin.get(`/api/outbox/${hit.id}`)).body.text as string;
    await new Promise((r) => setTimeout(r, 150));
  }
  throw new Error(`no message ${subject} to ${to} reached the Outbox in ${timeoutMs} ms`);
}
