import { describe, expect, it } from 'vitest';
import { formatRange } from '../../shared/format';
import {
  escapeHtml,
  formatDate,
  formatDateTime,
  jobApprovedMail,
  jobAssignedMail,
  jobReturnedMail,
  jobSubmittedMail,
  standardsDueMail,
  weeklyDueListMail,
} from './templates';

const appUrl = 'https://stillpoint.works.example.test/';

describe('mail templates', () => {
  it('job assigned: tag, due date, permit and a link to the job', () => {
    const m = jobAssignedMail({ appUrl, jobId: 'J-0042', tag: 'FT-101', service: 'Boiler feed water flow', recipientName: 'Ana', assignedBy: 'Lee', dueDate: '2025-04-01', permitNumber: 'PTW-778' });
    expect(m.subject).toBe('Assigned to you: FT-101 (due 2025-04-01)');
    expect(m.text).toContain('Hello Ana,');
    expect(m.text).toContain('Lee has assigned you the calibration of FT-101.');
    expect(m.text).toMatch(/Permit: +PTW-778/);
    expect(m.text).toContain('https://stillpoint.works.example.test/jobs/J-0042');
    expect(m.html).toContain('href="https://stillpoint.works.example.test/jobs/J-0042"');
  });

  it('job submitted: who and when in UTC', () => {
    const m = jobSubmittedMail({ appUrl, jobId: 'J-7', tag: 'PT-204', submittedBy: 'Ana', submittedAt: '2025-03-14T09:30:12Z', outcome: 'pass' });
    expect(m.subject).toBe('Ready for review: PT-204');
    expect(m.text).toMatch(/Submitted: +2025-03-14 09:30 UTC/);
    expect(m.text).toMatch(/As-left result: +pass/);
  });

  it('job resubmitted after a return: the comment and the reply, escaped, and a link to the review page', () => {
    const m = jobSubmittedMail({
      appUrl,
      jobId: 'J-7',
      tag: 'PT-204',
      submittedBy: 'Ana',
      submittedAt: '2025-03-16T08:00:00Z',
      reply: { text: 'Re-made the <fittings>.', comment: 'Point 3 leaks.', returnedBy: 'Lee' },
    });
    expect(m.subject).toBe('Resubmitted for review: PT-204');
    expect(m.text).toContain('Lee returned it with these comments:');
    expect(m.text).toContain('Point 3 leaks.');
    expect(m.text).toContain('Ana replied:');
    expect(m.text).toContain('Re-made the <fittings>.');
    expect(m.html).toContain('Re-made the &lt;fittings&gt;.');
    expect(m.text).toContain('https://stillpoint.works.example.test/jobs/J-7/review');
    const silent = jobSubmittedMail({ appUrl, jobId: 'J-7', tag: 'PT-204', submittedBy: 'Ana', submittedAt: '2025-03-16T08:00:00Z', reply: { text: '', comment: 'Point 3 leaks.', returnedBy: 'Lee' } });
    expect(silent.text).toContain('Ana resubmitted without a reply.');
  });

  it('job returned: the comment is quoted, and escaped in HTML', () => {
    const m = jobReturnedMail({ appUrl, jobId: 'J-7', tag: 'PT-204', returnedBy: 'Lee', returnedAt: new Date('2025-03-15T10:00:00Z'), comment: 'Point 3 <down> was captured manually;\nadd the reason.' });
    expect(m.subject).toBe('Returned with comments: PT-204');
    expect(m.text).toContain('  > Point 3 <down> was captured manually;\n  > add the reason.');
    expect(m.html).toContain('Point 3 &lt;down&gt; was captured manually;');
    expect(m.html).not.toContain('<down>');
  });

  it('job approved: signature meaning and certificate number', () => {
    const m = jobApprovedMail({ appUrl, jobId: 'J-7', tag: 'PT-204', approvedBy: 'Lee', approvedAt: '2025-03-16T08:00:00Z', meaning: 'Reviewed and approved', certificateNumber: 'SP-2025-0007' });
    expect(m.subject).toBe('Approved: PT-204');
    expect(m.text).toMatch(/Meaning: +Reviewed and approved/);
    expect(m.text).toMatch(/Certificate: +SP-2025-0007/);
    expect(m.text).toMatch(/Signed: +2025-03-16 08:00 UTC/);
  });

  it('standards due: sorted by due date, count in the subject', () => {
    const m = standardsDueMail({
      appUrl,
      asOf: '2025-03-01',
      standards: [
        { description: 'Pressure calibrator 0–2 bar', serial: 'PC-77', certificateNumber: 'C-1', dueDate: '2025-03-20' },
        { description: 'Bench multimeter', serial: 'DM-12', dueDate: '2025-03-05' },
      ],
    });
    expect(m.subject).toBe('Standards due within 30 days: 2');
    expect(m.text.indexOf('DM-12')).toBeLessThan(m.text.indexOf('PC-77'));
    expect(m.text).toContain('2 reference standards fall due within 30 days of 2025-03-01.');
    expect(m.html).toContain('https://stillpoint.works.example.test/standards');
  });

  it('weekly due list: overdue and due sections', () => {
    const m = weeklyDueListMail({
      appUrl,
      weekOf: '2025-03-10',
      items: [
        { tag: 'FT-101', service: 'Boiler 1 feedwater flow', dueDate: '2025-03-12', overdue: false, assignee: 'Ana' },
        { tag: 'LT-9', dueDate: '2025-02-01', overdue: true },
      ],
    });
    expect(m.subject).toBe('Week of 2025-03-10: 1 overdue, 1 due');
    // Every column filled: a tag with no service recorded says so with a dash, not a blank.
    expect(m.text).toMatch(/Overdue\n\n.*\n.*\n {2}2025-02-01 +LT-9 +— +unassigned/);
    expect(m.text).toMatch(/2025-03-12 +FT-101 +Boiler 1 feedwater flow +Ana/);
    expect(weeklyDueListMail({ appUrl, weekOf: '2025-03-10', items: [] }).text).toContain('Nothing is due or overdue.');
  });

  it('helpers', () => {
    expect(escapeHtml(`<a href="x">'&'</a>`)).toBe('&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;');
    expect(formatDateTime('2025-01-01T23:59:59.999Z')).toBe('2025-01-01 23:59 UTC');
    expect(() => formatDateTime('not a date')).toThrow(RangeError);
  });
});

describe('one style with the screens and the certificate', () => {
  it('states the range in the one unit spelling and times in the site zone with their offset', () => {
    const m = jobSubmittedMail({
      appUrl: 'http://localhost:5173',
      jobId: 'j-1',
      tag: 'FT-101',
      range: formatRange(0, 100, 'inH2O@68F'),
      timeZone: 'Europe/London',
      submittedBy: 'Ana',
      submittedAt: '2026-06-01T09:30:00Z',
    });
    expect(m.text).toMatch(/Range:\s+0–100 inH2O at 68 °F/);
    expect(m.text).toMatch(/Submitted:\s+2026-06-01 10:30 UTC\+1/);
    expect(m.html).toContain('0–100 inH2O at 68 °F');
    // Without a zone, UTC as before.
    expect(formatDateTime('2026-06-01T09:30:00Z')).toBe('2026-06-01 09:30 UTC');
    expect(formatDate('2026-06-01T23:30:00Z', 'Europe/London')).toBe('2026-06-02');
  });
});
