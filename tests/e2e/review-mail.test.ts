import { beforeAll, describe, expect, it } from 'vitest';
import { recordOffHostRequests } from '../helpers/browser';
import { checklistDone, e2eApp, outboxText, signIn } from '../helpers/e2e';
import { DEMO_PASSWORD, demoEmail } from '../helpers/test-server';

const app = e2eApp({ users: ['admin', 'tech'] });
let jobId: string;

beforeAll(async () => {
  expect(app.server.fakeSmtp, 'SMTP_URL is unset, so the local fake SMTP server runs').toBeDefined();
  // A job of the technician's, ready to submit: checklist done and an as-found run with its raw trace.
  ({ jobId } = await checklistDone(app, { asFound: true, trace: true }));
});

describe('team mail through SMTP to the local fake, shown in the Outbox', () => {
  it('mails the leads on submission and the technician on approval; the lead walks a point’s raw trace before signing', async () => {
    const errors: string[] = [];
    const offHost: string[][] = [];

    // The technician submits in the browser.
    const techContext = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await techContext.newPage();
      offHost.push(recordOffHostRequests(page));
      page.on('pageerror', (e) => errors.push(e.message));
      await signIn(page, app.server.url, 'tech');
      await page.goto(`${app.server.url}/jobs/${jobId}`);
      await page.getByTestId('submit-job').click();
      // Submission asks first, listing what goes to the lead.
      await page.getByTestId('submit-summary').waitFor();
      await page.getByTestId('confirm-submit').click();
      await page.getByText('Submitted for review.').waitFor();
    } finally {
      await techContext.close();
    }
    await outboxText(app.api.admin, /^Ready for review: FT-101$/, demoEmail('lead'));

    // The lead reviews: one point's raw trace, then signs with password and meaning.
    const leadContext = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await leadContext.newPage();
      offHost.push(recordOffHostRequests(page));
      page.on('pageerror', (e) => errors.push(e.message));
      await signIn(page, app.server.url, 'lead');
      await page.goto(`${app.server.url}/jobs/${jobId}/review`);
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
    await outboxText(app.api.admin, /^Approved: FT-101$/, demoEmail('tech'));

    // The admin reads both in the Outbox page.
    const adminContext = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    try {
      const page = await adminContext.newPage();
      offHost.push(recordOffHostRequests(page));
      page.on('pageerror', (e) => errors.push(e.message));
      await signIn(page, app.server.url, 'admin');
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
