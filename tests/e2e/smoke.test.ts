import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser, recordOffHostRequests } from '../helpers/browser';
import { startTestServer } from '../helpers/test-server';

/** Demo users of DESIGN.md §5: tech@, lead@, admin@, auditor@ at the demo domain; password DEMO_PASSWORD's default. */
const DOMAIN = 'stillpoint-demo.test';
const PASSWORD = 'stillpoint-demo';

const SHARED = ['queue', 'instruments', 'standards', 'bench', 'records'];
const CASES = [
  { user: 'tech', role: 'Technician', nav: SHARED },
  { user: 'lead', role: 'Lead', nav: [...SHARED, 'review', 'audit'] },
  { user: 'admin', role: 'Admin', nav: [...SHARED, 'audit', 'users', 'outbox'] },
  { user: 'auditor', role: 'Auditor', nav: [...SHARED, 'audit'] },
] as const;

let server: { url: string; close(): Promise<void> };
let browser: Browser;

beforeAll(async () => {
  server = await startTestServer();
  browser = await launchBrowser();
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

describe('sign-in and role navigation', () => {
  for (const c of CASES) {
    it(`${c.user}@ signs in and sees the ${c.role.toLowerCase()} navigation, with no off-machine requests`, async () => {
      const context = await browser.newContext({ viewport: { width: 1280, height: 800 } });
      const page = await context.newPage();
      const offHost = recordOffHostRequests(page);
      const pageErrors: string[] = [];
      page.on('pageerror', (e) => pageErrors.push(e.message));
      try {
        // Signed out: any page leads to the sign-in form.
        await page.goto(`${server.url}/instruments`);
        await page.waitForURL(/\/login\?next=%2Finstruments$/);
        await page.getByLabel('Email').fill(`${c.user}@${DOMAIN}`);
        await page.getByLabel('Password').fill(PASSWORD);
        await page.getByRole('button', { name: 'Sign in' }).click();

        // Back where we were going, inside the shell.
        await page.waitForURL(/\/instruments$/);
        await page.getByTestId('nav-queue').waitFor();
        expect(await page.getByTestId('current-role').textContent()).toBe(c.role);

        const testIds = await page.locator('nav[aria-label="Main"] [data-testid^="nav-"]').evaluateAll((els) => els.map((e) => e.getAttribute('data-testid')));
        expect(testIds).toEqual(c.nav.map((n) => `nav-${n}`));
        expect(testIds.includes('nav-users')).toBe(c.user === 'admin');
        expect(testIds.includes('nav-audit')).toBe(c.user !== 'tech');

        // The register loaded from the server (a table, or its empty message), not an error.
        await page.getByRole('table', { name: 'Instruments register' }).waitFor();

        // Both faces are bundled and came from our own server (the off-host check covers the rest).
        const fonts = await page.evaluate(async () => {
          await document.fonts.ready;
          const loaded: string[] = [];
          document.fonts.forEach((f) => {
            if (f.status === 'loaded') loaded.push(f.family.replace(/"/g, ''));
          });
          return loaded;
        });
        expect(fonts).toContain('Inter');
        expect(fonts).toContain('JetBrains Mono');

        // Pages the role may not open answer with the no-access page, not the content.
        if (c.user !== 'admin') {
          await page.goto(`${server.url}/users`);
          await page.getByRole('heading', { name: 'No access' }).waitFor();
        }

        await page.getByTestId('sign-out').click();
        await page.waitForURL(/\/login$/);

        expect(offHost).toEqual([]);
        expect(pageErrors).toEqual([]);
      } finally {
        await context.close();
      }
    });
  }
});
