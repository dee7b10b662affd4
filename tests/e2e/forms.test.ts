/**
 * Forms in plain words (issue 13, item 8): bad input on the instrument, standard, job and user
 * forms shows every field error at once, next to its field, in words a technician would use —
 * never the validation library's own text — and server field errors land on their fields too.
 */
import type { Browser, Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../helpers/browser';
import { ApiClient, DEMO_PASSWORD, demoEmail, startTestServer, type TestServer } from '../helpers/test-server';

let server: TestServer;
let browser: Browser;

beforeAll(async () => {
  server = await startTestServer();
  browser = await launchBrowser();
}, 180_000);

afterAll(async () => {
  await browser?.close();
  await server?.close();
});

/** Text the validation library writes on its own; none of it may reach a form. */
const LIBRARY_WORDS = /Too (big|small)|expected|Invalid (input|option)|received|NaN|must be finite/i;

async function signIn(role: 'lead' | 'admin', path: string): Promise<{ page: Page; close: () => Promise<void> }> {
  const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
  const page = await context.newPage();
  await page.goto(`${server.url}${path}`);
  await page.getByLabel('Email').fill(demoEmail(role));
  await page.getByLabel('Password').fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByTestId('nav-queue').waitFor();
  return { page, close: () => context.close() };
}

/** Each field's error as shown: label → message, read from the accessible error under each control. */
async function fieldErrors(scope: Locator): Promise<Record<string, string>> {
  return scope.evaluate((root) => {
    const out: Record<string, string> = {};
    for (const control of Array.from(root.querySelectorAll('input[aria-invalid="true"], select[aria-invalid="true"]'))) {
      const label = root.querySelector(`label[for="${control.id}"]`)?.textContent?.trim() ?? control.id;
      const ids = (control.getAttribute('aria-describedby') ?? '').split(' ').filter((id) => id.endsWith('-error'));
      out[label] = ids.map((id) => root.querySelector(`[id="${id}"]`)?.textContent?.trim() ?? '').join(' ');
    }
    return out;
  });
}

/** Submits once and waits until `n` fields show an error (all of them at once, from one click). */
async function submitAndCollect(scope: Locator, button: string, n: number): Promise<Record<string, string>> {
  await scope.getByRole('button', { name: button, exact: true }).click();
  await expect.poll(async () => Object.keys(await fieldErrors(scope)).length, { timeout: 15_000 }).toBe(n);
  const errors = await fieldErrors(scope);
  expect(await scope.innerText()).not.toMatch(LIBRARY_WORDS);
  return errors;
}

describe('every field error at once, in plain words', () => {
  it('instrument form: errors on every bad field together; a reversed range asks before saving', async () => {
    const { page, close } = await signIn('lead', '/instruments');
    try {
      await page.getByRole('button', { name: 'Add instrument' }).click();
      const form = page.getByRole('form', { name: 'New instrument' });
      await form.getByLabel('Tag').fill('');
      await form.getByLabel('LRV').fill('');
      await form.getByLabel('Low-flow cutoff').selectOption('clamp');
      await form.getByLabel('Cutoff value (%)').fill('500');
      await form.getByLabel('Tolerance (± % of span)').fill('0');
      await form.getByLabel('Interval (days)').fill('0');
      const errors = await submitAndCollect(form, 'Add instrument', 5);
      expect(errors).toEqual({
        Tag: 'Enter a tag of at least 2 characters (e.g. FT-101)',
        LRV: 'Enter the LRV as a number',
        'Cutoff value (%)': 'The cutoff is at most 50 %',
        'Tolerance (± % of span)': 'The tolerance must be above 0 %',
        'Interval (days)': 'The interval is at least 1 day',
      });

      // Corrected, but with LRV above URV on a square-root flow transmitter: a confirmation, not silence.
      const tag = `LT-${Date.now().toString().slice(-5)}`;
      await form.getByLabel('Tag').fill(tag);
      await form.getByLabel('LRV').fill('100');
      await form.getByLabel('URV').fill('0');
      await form.getByLabel('Cutoff value (%)').fill('5');
      await form.getByLabel('Tolerance (± % of span)').fill('0.5');
      await form.getByLabel('Interval (days)').fill('365');
      await form.getByRole('button', { name: 'Add instrument', exact: true }).click();
      const ask = form.getByTestId('reversed-range');
      await ask.waitFor();
      expect(await ask.innerText()).toContain('The LRV is above the URV');
      await ask.getByRole('button', { name: 'Save with the reversed range' }).click();
      await page.getByRole('cell', { name: tag, exact: true }).waitFor();
    } finally {
      await close();
    }
  }, 120_000);

  it('standard form: errors together, units from the list only, and a server error on its field', async () => {
    const { page, close } = await signIn('lead', '/standards');
    try {
      await page.getByRole('button', { name: 'Add standard' }).click();
      const form = page.getByRole('form', { name: 'New standard' });
      // The unit is chosen from the product's list: no free text to type.
      expect(await form.getByLabel('Unit', { exact: true }).evaluate((el) => el.tagName)).toBe('SELECT');
      const units = await form.getByLabel('Unit', { exact: true }).evaluate((el) => Array.from((el as HTMLSelectElement).options).map((o) => o.value));
      expect(units).toContain('kPa');
      expect(units).not.toContain('mA');
      await form.getByLabel('Kind').selectOption('current');
      await expect.poll(() => form.getByLabel('Unit', { exact: true }).evaluate((el) => Array.from((el as HTMLSelectElement).options).map((o) => o.value))).toEqual(['mA']);
      await form.getByLabel('Kind').selectOption('pressure');

      await form.getByLabel('Range minimum').fill('100');
      await form.getByLabel('Range maximum').fill('0');
      await form.getByLabel('Resolution').fill('0');
      await form.getByLabel('Calibrated on').fill('2026-03-01');
      await form.getByLabel('Due on').fill('2026-01-01');
      const errors = await submitAndCollect(form, 'Add standard', 7);
      expect(errors).toEqual({
        'Serial number': 'Enter the serial number',
        Description: 'Describe the standard',
        'Range maximum': 'The range maximum must be above the minimum',
        Resolution: 'The resolution must be above 0',
        'Certificate number': 'Enter the certificate number',
        'Calibrated by (laboratory)': 'Name the laboratory that calibrated it (as on its certificate)',
        'Due on': 'The due date must come after the calibration date',
      });

      // Everything right but a serial already registered: the server's answer goes on the Serial field.
      await form.getByLabel('Serial number').fill('QDU-PC-0417');
      await form.getByLabel('Description').fill('Second module (test)');
      await form.getByLabel('Range minimum').fill('0');
      await form.getByLabel('Range maximum').fill('100');
      await form.getByLabel('Resolution').fill('0.001');
      await form.getByLabel('Certificate number').fill('HPL-1');
      await form.getByLabel('Calibrated by (laboratory)').fill('Harbourside Pressure Laboratory (invented)');
      await form.getByLabel('Due on').fill('2027-03-01');
      expect(await submitAndCollect(form, 'Add standard', 1)).toEqual({ 'Serial number': 'Already registered' });
    } finally {
      await close();
    }
  }, 120_000);

  it('register pages: a search narrows the table, and the counts above it stay the whole register', async () => {
    const lead = new ApiClient(server.url);
    await lead.login(demoEmail('lead'));
    const standards = (await lead.get('/api/standards?pageSize=100')).body as { items: { serial: string }[]; total: number };
    const instruments = (await lead.get('/api/instruments?pageSize=1')).body as { total: number };
    const { page, close } = await signIn('lead', '/standards');
    try {
      const stat = page.locator('dt', { hasText: /^Standards$/ }).locator('xpath=following-sibling::dd');
      await expect.poll(() => stat.textContent()).toBe(String(standards.total));
      await page.getByPlaceholder('Search description, serial, certificate…').fill(standards.items[0]!.serial);
      await expect.poll(() => page.getByRole('table').locator('tbody tr').count()).toBe(1);
      expect(await stat.textContent()).toBe(String(standards.total));
      await page.goto(`${server.url}/instruments`);
      const header = page.getByText(/^The transmitter register/);
      await expect.poll(() => header.textContent()).toContain(`${instruments.total} tags`);
      await page.getByPlaceholder('Search tag, service, location…').fill('no-such-tag-anywhere');
      await page.getByText('No instruments match').waitFor();
      // The description no longer gives a count: the search's 0 is not the register's size.
      await expect.poll(() => header.textContent()).toBe('The transmitter register.');
    } finally {
      await close();
    }
  }, 120_000);

  it('job form: errors together on the due date and the notes', async () => {
    // An instrument never calibrated needs a job: it is listed on the lead's queue.
    const lead = new ApiClient(server.url);
    await lead.login(demoEmail('lead'));
    const tag = `PT-${Date.now().toString().slice(-5)}`;
    const created = await lead.post('/api/instruments', { tag, kind: 'pressure', service: 'Forms test header', lrv: 0, urv: 600, unit: 'kPa', outputMode: 'linear', tolerancePct: 0.5, intervalDays: 365 });
    expect(created.status, JSON.stringify(created.body)).toBe(201);

    const { page, close } = await signIn('lead', '/');
    try {
      const row = page.getByRole('list', { name: 'Needs a job' }).getByRole('listitem').filter({ hasText: tag });
      await row.getByRole('button', { name: 'Create job' }).click();
      const form = page.getByRole('form', { name: `New job for ${tag}` });
      await form.getByLabel('Due on').fill('');
      await form.getByLabel('Notes for the technician').fill('x'.repeat(2001));
      const errors = await submitAndCollect(form, 'Create job', 2);
      expect(errors).toEqual({ 'Due on': 'Enter a date', 'Notes for the technician': 'Keep this to 2000 characters or fewer' });
    } finally {
      await close();
    }
  }, 120_000);

  it('user form: errors together on name, email and password', async () => {
    const { page, close } = await signIn('admin', '/users');
    try {
      await page.getByRole('button', { name: 'Invite user' }).click();
      const form = page.getByRole('dialog').locator('form');
      await form.getByLabel('Email').fill('not-an-address');
      await form.getByLabel('Initial password').fill('short');
      const errors = await submitAndCollect(form, 'Invite', 3);
      expect(errors).toEqual({ Name: 'Enter a name', Email: 'Enter a valid email address', 'Initial password': 'Use at least 10 characters' });
    } finally {
      await close();
    }
  }, 120_000);
});
