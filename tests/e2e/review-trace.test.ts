import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemoHistory } from '../../server/demo/demo-history';
import { launchBrowser, recordOffHostRequests } from '../helpers/browser';
import { DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let server: TestServer;
let browser: Browser;

beforeAll(async () => {
  server = await startTestServer();
  await seedDemoHistory(server.database.db, { audit: server.services.audit, traceSeqBase: 1_000_000_000_000 });
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('the lead reviews a point’s raw trace and signs', () => {
  it('opens the record, reads the trace of a point, zooms, and approves with a re-entered password', async () => {
    const context = await browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const page = await context.newPage();
    const offHost = recordOffHostRequests(page);
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(`${e.message}\n${e.stack ?? ''}`));
    try {
      await page.goto(`${server.url}/login`);
      await page.getByLabel('Email').fill(demoEmail('lead'));
      await page.getByLabel('Password').fill(DEMO_PASSWORD);
      await page.getByRole('button', { name: 'Sign in' }).click();
      await page.getByTestId('nav-records').click();

      // Records: the job waiting for review, with a link to its review.
      await page.getByRole('button', { name: 'Awaiting review' }).click();
      const row = page.getByRole('row').filter({ hasText: 'PT-302' });
      await row.getByRole('link', { name: 'Review' }).click();
      await page.waitForURL(/\/jobs\/[0-9a-f-]+\/review$/);

      // The whole as-found run is drawn as an envelope first.
      const chart = page.getByTestId('review-trace');
      await page.waitForSelector('[data-testid="review-trace"][data-drawn="true"]');
      expect(await chart.getAttribute('data-mode')).toBe('envelope');
      await page.getByTestId('standards-used').getByText('QDU-MM-0031').waitFor();

      // One point: every raw sample of its approach and hold.
      await page.getByTestId('point-2').click();
      await page.waitForSelector('[data-testid="review-trace"][data-mode="raw"]');
      await page.getByText(/Every sample as received/).waitFor();
      const rowSel = page.locator('tr[aria-selected="true"]');
      expect(await rowSel.count()).toBe(1);

      // Drag across the chart to zoom into the hold.
      const box = (await chart.locator('.u-over').boundingBox())!;
      await page.mouse.move(box.x + box.width * 0.55, box.y + box.height / 2);
      await page.mouse.down();
      await page.mouse.move(box.x + box.width * 0.9, box.y + box.height / 2, { steps: 8 });
      await page.mouse.up();
      const count = () => page.evaluate(() => /([\d,]+) samples in view/.exec(document.body.innerText)?.[1] ?? '');
      const before = await count();
      await page.waitForFunction(
        (b) => {
          const m = /([\d,]+) samples in view/.exec(document.body.innerText);
          return !!m && m[1] !== b && !document.body.innerText.includes('loading…');
        },
        before,
        { timeout: 10_000 },
      );
      // The zoomed window holds fewer samples than the point's approach and hold.
      expect(Number((await count()).replace(/,/g, ''))).toBeLessThan(Number(before.replace(/,/g, '')));
      await page.getByRole('button', { name: 'Pan earlier' }).click();
      await page.getByRole('button', { name: 'Whole run' }).click();
      await page.waitForSelector('[data-testid="review-trace"][data-mode="envelope"]');

      // Sign: a wrong password is refused in place, then the right one approves.
      await page.getByRole('button', { name: 'Approve…' }).click();
      const dialog = page.getByRole('dialog');
      await dialog.getByText(/Signing as Bram Oduya/).waitFor();
      await dialog.getByLabel('Your password').fill('not-the-password');
      await dialog.getByRole('button', { name: 'Sign and approve' }).click();
      await dialog.getByText('The password is not right').waitFor();
      await dialog.getByLabel('Your password').fill(DEMO_PASSWORD);
      await dialog.getByRole('button', { name: 'Sign and approve' }).click();
      await page.getByTestId('signatures').getByText('Bram Oduya').waitFor();
      await page.getByRole('button', { name: 'Correct (new revision)' }).waitFor();
      const trail = page.getByTestId('job-audit');
      // The trail reads in words (the slugs stay in the stored rows).
      await trail.getByText('Signature refused: wrong password').waitFor();
      await trail.getByText('Approved', { exact: true }).waitFor();

      expect(offHost).toEqual([]);
      expect(errors).toEqual([]);
    } finally {
      await context.close();
    }
  });
});
