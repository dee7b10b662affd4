import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser, recordOffHostRequests } from '../helpers/browser';
import { ApiClient, DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';
import { completeChecklist, demoStandards, passingAsFound } from '../integration/records-helpers';

let server: TestServer;
let browser: Browser;
let admin: ApiClient;
let jobId: string;

/** Waits until the Outbox (through the API, as admin) holds a message whose subject matches. */
async function mailArrives(subject: RegExp, to: string): Promise<void> {
  const deadline = Date.now() + 30_000;
  while (Date.now() < deadline) {
    const items = (await admin.get('/api/outbox')).body.items as Array<{ subject: string; to: string[] }>;
    if (items.some((m) => subject.test(m.subject) && m.to.includes(to))) return;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`no message ${subject} to ${to} reached the Outbox`);
}

async function signIn(page: Page, email: string) {
  await page.goto(`${server.url}/login`);
  await page.getByLabel('Email').fill(email);
  await page.getByLabel('Password').fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByTestId('nav-records').or(page.getByTestId('nav-queue')).first().waitFor();
}

beforeAll(async () => {
  server = await startTestServer();
  expect(server.fakeSmtp, 'SMTP_URL is unset, so the local fake SMTP server runs').toBeDefined();
  admin = new ApiClient(server.url);
  await admin.login(demoEmail('admin'));
  // A job of the technician's, ready to submit: checklist done and an as-found run with its raw trace.
  const tech = new ApiClient(server.url);
  const me = await tech.login(demoEmail('tech'));
  const jobs = (await tech.get('/api/jobs')).body.items as Array<{ id: string; tag: string; status: string }>;
  jobId = jobs.find((j) => j.tag === 'FT-101' && j.status !== 'approved')!.id;
  const s = await demoStandards(server);
  await completeChecklist(tech, jobId, [s.pressure.id, s.current.id]);
  await passingAsFound(server, jobId, 'FT-101', me.id, { trace: true });
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('team mail through SMTP to the local fake, shown in the Outbox', () => {
  it('mails the leads on submission and the technician on approval; the lead walks a point’s raw trace before signing', async () => {
    const errors: string[] = [];
    const offHost: string[][] = [];

    // The technician submits in the browser.
    const techContext = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await techContext.newPage();
      offHost.push(recordOffHostRequests(page));
      page.on('pageerror', (e) => errors.push(e.message));
      await signIn(page, demoEmail('tech'));
      await page.goto(`${server.url}/jobs/${jobId}`);
      await page.getByTestId('submit-job').click();
      // Submission asks first, listing what goes to the lead.
      await page.getByTestId('submit-summary').waitFor();
      await page.getByTestId('confirm-submit').click();
      await page.getByText('Submitted for review.').waitFor();
    } finally {
      await techContext.close();
    }
    await mailArrives(/^Ready for review: FT-101$/, demoEmail('lead'));

    // The lead reviews: one point's raw trace, then signs with password and meaning.
    const leadContext = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await leadContext.newPage();
      offHost.push(recordOffHostRequests(page));
      page.on('pageerror', (e) => errors.push(e.message));
      await signIn(page, demoEmail('lead'));
      await page.goto(`${server.url}/jobs/${jobId}/review`);
      await page.waitForSelector('[data-testid="review-trace"][data-drawn="true"]');
      await page.getByTestId('point-2').click();
      await page.waitForSelector('[data-testid="review-trace"][data-mode="raw"]');
      await page.getByText(/Every sample as received/).waitFor();
      await page.getByRole('button', { name: 'Approve…' }).click();
      const dialog = page.getByRole('dialog');
      await dialog.getByLabel('Meaning of this signature').selectOption('reviewed and approved');
      await dialog.getByLabel('Your password').fill(DEMO_PASSWORD);
      await dialog.getByRole('button', { name: 'Sign and approve' }).click();
      await page.getByTestId('signatures').getByText('Bram Oduya').waitFor();
    } finally {
      await leadContext.close();
    }
    await mailArrives(/^Approved: FT-101$/, demoEmail('tech'));

    // The admin reads both in the Outbox page.
    const adminContext = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await adminContext.newPage();
      offHost.push(recordOffHostRequests(page));
      page.on('pageerror', (e) => errors.push(e.message));
      await signIn(page, demoEmail('admin'));
      await page.getByTestId('nav-outbox').click();
      await page.getByRole('heading', { name: 'Outbox' }).waitFor();
      const list = page.getByRole('list', { name: 'Messages' });
      await list.getByText('Ready for review: FT-101').waitFor();
      await list.getByText('Approved: FT-101').click();
      const message = page.getByRole('article', { name: 'Message' });
      await message.getByText(/Bram Oduya has approved the calibration of FT-101/).waitFor();
      await message.getByText(demoEmail('tech')).first().waitFor();
      await message.getByText(/reviewed and approved/).first().waitFor();
      await list.getByText('Ready for review: FT-101').click();
      await message.getByText(/has submitted the calibration of FT-101 for review/).waitFor();
    } finally {
      await adminContext.close();
    }
    expect(offHost.flat()).toEqual([]);
    expect(errors).toEqual([]);
  });
});
