import { beforeAll, describe, expect, it } from 'vitest';
import { checklistDone, e2eApp, outboxText, signIn } from '../helpers/e2e';
import { DEMO_PASSWORD, demoEmail } from '../helpers/test-server';

/**
 * The return loop in the browser: the lead returns a submitted job with a comment, the technician
 * sees it at the top of the job page and answers it on resubmission, the lead reads the reply on
 * the review page and approves.
 */
const app = e2eApp({ users: ['admin', 'tech'] });
let jobId: string;

const COMMENT = 'Point 3 down drifts during the hold; re-make the fittings and repeat the as-found.';
const REPLY = 'Fittings re-made and leak-tested at 110 % of span; the hold is steady now.';

beforeAll(async () => {
  ({ jobId } = await checklistDone(app, { asFound: true }));
  const sub = await app.api.tech.post(`/api/jobs/${jobId}/submit`);
  expect(sub.status, JSON.stringify(sub.body)).toBe(200);
});

describe('the return loop in the browser', () => {
  it('lead returns with a comment, technician sees it and replies on resubmission, lead reads the reply and approves', async () => {
    const errors: string[] = [];

    // 1. The lead returns the job with a comment.
    const lead = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const leadPage = await lead.newPage();
    leadPage.on('pageerror', (e) => errors.push(e.message));
    await signIn(leadPage, app.server.url, 'lead');
    await leadPage.goto(`${app.server.url}/jobs/${jobId}/review`);
    await leadPage.getByRole('button', { name: 'Return…' }).click();
    const dialog = leadPage.getByRole('dialog');
    await dialog.getByLabel('What needs correcting').fill(COMMENT);
    await dialog.getByLabel('Your password').fill(DEMO_PASSWORD);
    await dialog.getByRole('button', { name: 'Sign and return' }).click();
    await leadPage.getByTestId('review-exchange-panel').getByText(COMMENT).waitFor();
    await leadPage.getByTestId('review-exchange-panel').getByText('No reply yet.').waitFor();

    // The return mail links to the job page, where the comment now stands.
    const returned = await outboxText(app.api.admin, /^Returned with comments: FT-101$/, demoEmail('tech'));
    expect(returned).toContain(COMMENT);
    const link = /https?:\/\/\S+\/jobs\/[0-9a-f-]{36}/.exec(returned)?.[0];
    expect(link).toBeDefined();

    // 2. The technician opens the mail's link: the comment, who and when are at the top.
    const tech = await app.browser.newContext({ viewport: { width: 1440, height: 1000 } });
    const techPage = await tech.newPage();
    techPage.on('pageerror', (e) => errors.push(e.message));
    await signIn(techPage, app.server.url, 'tech');
    await techPage.goto(`${app.server.url}${new URL(link!).pathname}`);
    const notice = techPage.getByTestId('return-notice');
    await notice.waitFor();
    expect(await notice.getByTestId('return-comment').innerText()).toBe(COMMENT);
    expect(await notice.innerText()).toMatch(/Returned by Bram Oduya on \d{4}-\d{2}-\d{2} \d{2}:\d{2}/);
    // The notice is the first thing under the page header, above the steps.
    const noticeTop = (await notice.boundingBox())!.y;
    const submitTop = (await techPage.getByTestId('submit-job').boundingBox())!.y;
    expect(noticeTop).toBeLessThan(submitTop);

    // 3. The technician replies and resubmits.
    await techPage.getByLabel(/Your reply to Bram Oduya/).fill(REPLY);
    await techPage.waitForSelector('[data-testid="submit-job"]:not([disabled])');
    await techPage.getByTestId('submit-job').click();
    // Submit asks for a confirmation that lists what goes to the lead.
    await techPage.getByTestId('confirm-submit').click();
    // Submission freezes the record: on a loaded machine give it time, and report a refusal in its own words.
    const done = techPage.getByText('Submitted for review.');
    const refused = techPage.getByText('Not submitted');
    await done.or(refused).first().waitFor({ timeout: 90_000 });
    if (await refused.count()) throw new Error(`resubmission refused: ${await techPage.locator('body').innerText()}`);
    await techPage.getByTestId('return-notice').waitFor({ state: 'detached' });
    const resubmitted = await outboxText(app.api.admin, /^Resubmitted for review: FT-101$/, demoEmail('lead'));
    expect(resubmitted).toContain(REPLY);
    expect(resubmitted).toContain(`/jobs/${jobId}/review`);
    await tech.close();

    // 4. The lead sees the exchange (comment, reply, who, when) and approves.
    await leadPage.goto(`${app.server.url}/jobs/${jobId}/review`);
    const exchange = leadPage.getByTestId('exchange');
    await exchange.getByTestId('exchange-reply').getByText(REPLY).waitFor();
    const text = await exchange.innerText();
    expect(text).toContain(COMMENT);
    expect(text).toMatch(/Bram Oduya returned it/);
    expect(text).toMatch(/replied on resubmission \d{4}-\d{2}-\d{2} \d{2}:\d{2}/);
    await leadPage.getByRole('button', { name: 'Approve…' }).click();
    const approve = leadPage.getByRole('dialog');
    await approve.getByLabel('Your password').fill(DEMO_PASSWORD);
    await approve.getByRole('button', { name: 'Sign and approve' }).click();
    await leadPage.getByTestId('signatures').getByText('approved', { exact: true }).waitFor();
    await lead.close();

    expect((await app.api.admin.get(`/api/jobs/${jobId}`)).body.status).toBe('approved');
    expect(errors).toEqual([]);
  });
});
