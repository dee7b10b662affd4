import { beforeAll, describe, expect, it } from 'vitest';
import { tinyPdf, tinyPng } from '../fixtures/test-files';
import { checklistDone, e2eApp, signIn } from '../helpers/e2e';
import { passingAsFound } from '../integration/records-helpers';

/**
 * Uploads through the UI: a standard's certificate on the register, an as-found photo on the job;
 * both seen where they are used (register, job, review); a file whose content is not what its name
 * says is refused with a message in words.
 */
const app = e2eApp({ users: ['tech'] });
let jobId: string;
let techId: string;
let serial: string;

beforeAll(async () => {
  ({ jobId, techId, pressureSerial: serial } = await checklistDone(app));
});

describe('uploads in the browser', () => {
  it('a certificate on the register and an as-found photo on the job, seen on the register, job and review pages; wrong content refused in words', async () => {
    const errors: string[] = [];

    // 1. The lead uploads the pressure standard's certificate on the register; a text file named .pdf is refused.
    const lead = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const leadPage = await lead.newPage();
    leadPage.on('pageerror', (e) => errors.push(e.message));
    await signIn(leadPage, app.server.url, 'lead');
    await leadPage.goto(`${app.server.url}/standards`);
    await leadPage.getByLabel('Search standards').fill(serial);
    await leadPage.getByRole('button', { name: `Certificates of ${serial}` }).click();
    const dialog = leadPage.getByRole('dialog');
    await dialog.getByText('No certificate uploaded.').waitFor();
    const input = dialog.getByTestId('standard-certificates-input');
    await input.setInputFiles({ name: 'calibration-certificate.pdf', mimeType: 'application/pdf', buffer: Buffer.from('This is a note, not a certificate.\n') });
    const refused = dialog.getByTestId('upload-error');
    await refused.waitFor();
    const message = await refused.innerText();
    expect(message).toContain('calibration-certificate.pdf');
    expect(message).toMatch(/content is/i);
    expect(message).toMatch(/Choose a PDF/);
    await dialog.getByText('No certificate uploaded.').waitFor();

    await input.setInputFiles({ name: 'QDU-PC-0417 certificate 2026.pdf', mimeType: 'application/pdf', buffer: tinyPdf() });
    await dialog.getByTestId('attachment-certificate').getByText('QDU-PC-0417 certificate 2026.pdf').waitFor();
    await refused.waitFor({ state: 'detached' });
    await dialog.getByRole('button', { name: 'Close' }).click();
    // The register row now links the certificate; it opens as a PDF.
    const registerLink = leadPage.getByTestId('register-certificate-link').first();
    await registerLink.waitFor();
    const opened = await leadPage.request.get(app.server.url + (await registerLink.getAttribute('href'))!);
    expect(opened.status()).toBe(200);
    expect(opened.headers()['content-type']).toBe('application/pdf');
    expect(Buffer.from(await opened.body()).equals(tinyPdf())).toBe(true);

    // 2. The technician adds an as-found photo on the job page and sees the certificate of the standard chosen.
    const techCtx = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const techPage = await techCtx.newPage();
    techPage.on('pageerror', (e) => errors.push(e.message));
    await signIn(techPage, app.server.url, 'tech');
    await techPage.goto(`${app.server.url}/jobs/${jobId}`);
    const photos = techPage.getByTestId('job-photos');
    await photos.getByText('No as-found photos.').waitFor();
    await photos.getByTestId('job-photos-input').setInputFiles({ name: 'gauge.png', mimeType: 'image/png', buffer: Buffer.from('%PDF-1.4 not an image') });
    expect(await photos.getByTestId('upload-error').innerText()).toMatch(/gauge\.png.*not accepted.*Choose a PNG, JPEG or WebP image/s);
    await photos.getByTestId('job-photos-input').setInputFiles({ name: 'as-found nameplate.png', mimeType: 'image/png', buffer: tinyPng() });
    const photo = photos.getByRole('img', { name: 'photo: as-found nameplate.png' });
    await photo.waitFor();
    // Thumbnails load lazily: bring it into view (the preparation step above it is long) before checking it decoded.
    await photo.scrollIntoViewIfNeeded();
    await techPage.waitForFunction((el) => (el as HTMLImageElement).complete && (el as HTMLImageElement).naturalWidth > 0, await photo.elementHandle());
    await techPage.getByTestId('job-certificates').getByTestId('certificate-link').first().waitFor();
    await techCtx.close();

    // 3. After submission, the lead sees the photo and the certificate on the review page.
    await passingAsFound(app.server, jobId, 'FT-101', techId);
    expect((await app.api.tech.post(`/api/jobs/${jobId}/submit`)).status).toBe(200);
    await leadPage.goto(`${app.server.url}/jobs/${jobId}/review`);
    const reviewPhoto = leadPage.getByTestId('review-photos').getByRole('img', { name: 'photo: as-found nameplate.png' });
    await reviewPhoto.waitFor();
    await reviewPhoto.scrollIntoViewIfNeeded();
    await leadPage.waitForFunction((el) => (el as HTMLImageElement).complete && (el as HTMLImageElement).naturalWidth > 0, await reviewPhoto.elementHandle());
    expect(await leadPage.getByTestId('review-photos').getByRole('button', { name: /Remove/ }).count()).toBe(0);
    const certLink = leadPage.getByTestId('standards-used').getByTestId('certificate-link');
    await certLink.first().waitFor();
    expect(await certLink.count()).toBe(1);
    await lead.close();

    expect(errors).toEqual([]);
  });
});
