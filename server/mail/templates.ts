/**
 * Team mail wording: pure functions of plain data, no clock and no I/O. Each returns a subject,
 * a plain-text body and a simple HTML body with the same content. Every value put into HTML is
 * escaped. Dates are given as ISO strings (or Date) and shown in the site's time zone (UTC when
 * none is given) in the one style of shared/format; units are spelt as shared/format spells them.
 */
import { DEFAULT_TIME_ZONE, formatDate as dateInStyle, formatDateTime as dateTimeInStyle } from '../../shared/format';

/** A rendered message, ready for `Mailer.send` (add the recipients). */
export interface RenderedMail {
  subject: string;
  text: string;
  html: string;
}

type When = string | Date;

/** Where the links in mail point; one place to change if the client routes move. */
export const mailLinks = {
  job: (appUrl: string, jobId: string) => `${trimSlash(appUrl)}/jobs/${encodeURIComponent(jobId)}`,
  /** The lead's review page, where the return comments and the replies stand. */
  review: (appUrl: string, jobId: string) => `${trimSlash(appUrl)}/jobs/${encodeURIComponent(jobId)}/review`,
  queue: (appUrl: string) => `${trimSlash(appUrl)}/queue`,
  standards: (appUrl: string) => `${trimSlash(appUrl)}/standards`,
};

function trimSlash(url: string): string {
  return url.replace(/\/+$/, '');
}

/** HTML-escape text for element content and attribute values. */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

function toDate(w: When): Date {
  const d = typeof w === 'string' ? new Date(w) : w;
  if (Number.isNaN(d.getTime())) throw new RangeError(`not a date: ${String(w)}`);
  return d;
}

/** `2025-03-14`, the date in `zone` (default UTC). A bare `YYYY-MM-DD` string is returned as is. */
export function formatDate(w: When, zone: string = DEFAULT_TIME_ZONE): string {
  if (typeof w === 'string' && /^\d{4}-\d{2}-\d{2}$/.test(w)) return w;
  return dateInStyle(toDate(w), zone);
}

/** `2025-03-14 09:30 UTC`, or `2025-03-14 10:30 UTC+1` in a zone an hour east. */
export function formatDateTime(w: When, zone: string = DEFAULT_TIME_ZONE): string {
  return dateTimeInStyle(toDate(w), zone, { withZone: true });
}

/** One block of a message: a paragraph, a key/value list, a quoted comment or a table. */
type Block =
  | { kind: 'p'; text: string }
  | { kind: 'facts'; rows: [string, string][] }
  | { kind: 'quote'; text: string }
  | { kind: 'table'; head: string[]; rows: string[][] }
  | { kind: 'link'; label: string; href: string };

function compose(subject: string, greeting: string | undefined, blocks: Block[]): RenderedMail {
  const text: string[] = [];
  const html: string[] = [];
  if (greeting) {
    text.push(`${greeting},`, '');
    html.push(`<p>${escapeHtml(greeting)},</p>`);
  }
  for (const b of blocks) {
    switch (b.kind) {
      case 'p':
        text.push(b.text, '');
        html.push(`<p>${escapeHtml(b.text)}</p>`);
        break;
      case 'facts': {
        const w = Math.max(...b.rows.map(([k]) => k.length));
        for (const [k, v] of b.rows) text.push(`  ${`${k}:`.padEnd(w + 2)}${v}`);
        text.push('');
        html.push(
          '<table style="border-collapse:collapse">' +
            b.rows.map(([k, v]) => `<tr><th style="text-align:left;padding:2px 12px 2px 0;font-weight:600">${escapeHtml(k)}</th><td style="padding:2px 0">${escapeHtml(v)}</td></tr>`).join('') +
            '</table>',
        );
        break;
      }
      case 'quote':
        for (const line of b.text.split(/\r?\n/)) text.push(`  > ${line}`);
        text.push('');
        html.push(`<blockquote style="margin:8px 0;padding:4px 12px;border-left:3px solid #94a3b8;white-space:pre-wrap">${escapeHtml(b.text)}</blockquote>`);
        break;
      case 'table': {
        const widths = b.head.map((h, i) => Math.max(h.length, ...b.rows.map((r) => (r[i] ?? '').length)));
        const line = (cells: string[]) => '  ' + cells.map((c, i) => c.padEnd(widths[i] ?? 0)).join('  ').trimEnd();
        text.push(line(b.head), '  ' + widths.map((w) => '-'.repeat(w)).join('  '));
        for (const r of b.rows) text.push(line(r));
        text.push('');
        const cell = (tag: string, c: string) => `<${tag} style="text-align:left;padding:2px 12px 2px 0">${escapeHtml(c)}</${tag}>`;
        html.push(
          '<table style="border-collapse:collapse">' +
            `<tr>${b.head.map((h) => cell('th', h)).join('')}</tr>` +
            b.rows.map((r) => `<tr>${r.map((c) => cell('td', c)).join('')}</tr>`).join('') +
            '</table>',
        );
        break;
      }
      case 'link':
        text.push(`${b.label}: ${b.href}`, '');
        html.push(`<p><a href="${escapeHtml(b.href)}">${escapeHtml(b.label)}</a></p>`);
        break;
    }
  }
  const footer = 'Sent by Stillpoint. You receive this because of your role on the site.';
  text.push('--', footer);
  html.push(`<p style="color:#64748b;font-size:12px">${escapeHtml(footer)}</p>`);
  return {
    subject,
    text: text.join('\n'),
    html: `<!doctype html><html><body style="font-family:Inter,system-ui,sans-serif;font-size:14px;color:#0f172a">${html.join('\n')}</body></html>`,
  };
}

/** Common data of mail about one job. */
export interface JobMailBase {
  appUrl: string;
  jobId: string;
  /** Instrument tag, e.g. `FT-101`. */
  tag: string;
  /** Service description of the tag, when known. */
  service?: string;
  /** Name of the person the mail is for. */
  recipientName?: string;
  /** The instrument's range with its unit, as shared/format writes it (`0–100 inH2O at 68 °F`). */
  range?: string;
  /** The site's time zone (IANA); times are shown in it. Default UTC. */
  timeZone?: string;
}

/** Data of {@link jobAssignedMail}. */
export interface JobAssignedData extends JobMailBase {
  assignedBy: string;
  dueDate: When;
  permitNumber?: string;
  note?: string;
}

/** A lead assigned a calibration job to a technician. */
export function jobAssignedMail(d: JobAssignedData): RenderedMail {
  const facts: [string, string][] = [['Tag', d.tag]];
  if (d.service) facts.push(['Service', d.service]);
  if (d.range) facts.push(['Range', d.range]);
  facts.push(['Job', d.jobId], ['Due', formatDate(d.dueDate, d.timeZone)], ['Assigned by', d.assignedBy]);
  if (d.permitNumber) facts.push(['Permit', d.permitNumber]);
  const blocks: Block[] = [{ kind: 'p', text: `${d.assignedBy} has assigned you the calibration of ${d.tag}.` }, { kind: 'facts', rows: facts }];
  if (d.note) blocks.push({ kind: 'quote', text: d.note });
  blocks.push({ kind: 'link', label: 'Open the job', href: mailLinks.job(d.appUrl, d.jobId) });
  return compose(`Assigned to you: ${d.tag} (due ${formatDate(d.dueDate)})`, d.recipientName ? `Hello ${d.recipientName}` : undefined, blocks);
}

/** Data of {@link jobSubmittedMail}. */
export interface JobSubmittedData extends JobMailBase {
  submittedBy: string;
  submittedAt: When;
  /** Overall as-left decision in words, e.g. `pass`. */
  outcome?: string;
  /** A resubmission after a return: the lead's comment and the technician's reply (may be empty). */
  reply?: { text: string; comment: string; returnedBy: string };
}

/** A technician submitted a job for review. */
export function jobSubmittedMail(d: JobSubmittedData): RenderedMail {
  const facts: [string, string][] = [['Tag', d.tag]];
  if (d.service) facts.push(['Service', d.service]);
  if (d.range) facts.push(['Range', d.range]);
  facts.push(['Job', d.jobId], ['Submitted by', d.submittedBy], ['Submitted', formatDateTime(d.submittedAt, d.timeZone)]);
  if (d.outcome) facts.push(['As-left result', d.outcome]);
  const blocks: Block[] = [
    { kind: 'p', text: d.reply ? `${d.submittedBy} has resubmitted the calibration of ${d.tag} for review after it was returned.` : `${d.submittedBy} has submitted the calibration of ${d.tag} for review.` },
    { kind: 'facts', rows: facts },
  ];
  if (d.reply) {
    blocks.push({ kind: 'p', text: `${d.reply.returnedBy} returned it with these comments:` }, { kind: 'quote', text: d.reply.comment || '(no comment)' });
    blocks.push({ kind: 'p', text: d.reply.text ? `${d.submittedBy} replied:` : `${d.submittedBy} resubmitted without a reply.` });
    if (d.reply.text) blocks.push({ kind: 'quote', text: d.reply.text });
  }
  blocks.push({ kind: 'link', label: 'Review the job', href: mailLinks.review(d.appUrl, d.jobId) });
  return compose(d.reply ? `Resubmitted for review: ${d.tag}` : `Ready for review: ${d.tag}`, d.recipientName ? `Hello ${d.recipientName}` : undefined, blocks);
}

/** Data of {@link jobReturnedMail}. */
export interface JobReturnedData extends JobMailBase {
  returnedBy: string;
  returnedAt: When;
  comment: string;
}

/** A lead returned a job to the technician with comments. */
export function jobReturnedMail(d: JobReturnedData): RenderedMail {
  return compose(`Returned with comments: ${d.tag}`, d.recipientName ? `Hello ${d.recipientName}` : undefined, [
    { kind: 'p', text: `${d.returnedBy} has returned the calibration of ${d.tag} (job ${d.jobId}) on ${formatDateTime(d.returnedAt, d.timeZone)} with these comments:` },
    { kind: 'quote', text: d.comment },
    { kind: 'p', text: 'Address the comments and submit the job again.' },
    { kind: 'link', label: 'Open the job', href: mailLinks.job(d.appUrl, d.jobId) },
  ]);
}

/** Data of {@link jobApprovedMail}. */
export interface JobApprovedData extends JobMailBase {
  approvedBy: string;
  approvedAt: When;
  /** The meaning stated with the signature, e.g. `Reviewed and approved`. */
  meaning: string;
  certificateNumber?: string;
}

/** A lead approved and signed a job; the record is now locked. */
export function jobApprovedMail(d: JobApprovedData): RenderedMail {
  const facts: [string, string][] = [
    ['Tag', d.tag],
    ['Job', d.jobId],
    ['Signed by', d.approvedBy],
    ['Signed', formatDateTime(d.approvedAt, d.timeZone)],
    ['Meaning', d.meaning],
  ];
  if (d.certificateNumber) facts.push(['Certificate', d.certificateNumber]);
  return compose(`Approved: ${d.tag}`, d.recipientName ? `Hello ${d.recipientName}` : undefined, [
    { kind: 'p', text: `${d.approvedBy} has approved the calibration of ${d.tag}. The record is locked; any correction becomes a new revision with a reason.` },
    { kind: 'facts', rows: facts },
    { kind: 'link', label: 'Open the record', href: mailLinks.job(d.appUrl, d.jobId) },
  ]);
}

/** One reference standard in {@link standardsDueMail}. */
export interface DueStandard {
  description: string;
  serial: string;
  certificateNumber?: string;
  dueDate: When;
}

/** Data of {@link standardsDueMail}. */
export interface StandardsDueData {
  appUrl: string;
  recipientName?: string;
  /** The day the list was made (the mail does not read the clock). */
  asOf: When;
  /** Window in days; default 30. */
  withinDays?: number;
  standards: DueStandard[];
}

/** Reference standards whose calibration falls due within the window. */
export function standardsDueMail(d: StandardsDueData): RenderedMail {
  const days = d.withinDays ?? 30;
  const n = d.standards.length;
  const sorted = [...d.standards].sort((a, b) => formatDate(a.dueDate).localeCompare(formatDate(b.dueDate)));
  return compose(`Standards due within ${days} days: ${n}`, d.recipientName ? `Hello ${d.recipientName}` : undefined, [
    {
      kind: 'p',
      text:
        n === 0
          ? `No reference standard falls due within ${days} days of ${formatDate(d.asOf)}.`
          : `${n === 1 ? 'One reference standard falls' : `${n} reference standards fall`} due within ${days} days of ${formatDate(d.asOf)}. A standard past its due date blocks every run that uses it.`,
    },
    ...(n > 0
      ? [
          {
            kind: 'table' as const,
            head: ['Due', 'Standard', 'Serial', 'Certificate'],
            rows: sorted.map((s) => [formatDate(s.dueDate), s.description, s.serial, s.certificateNumber ?? '']),
          },
        ]
      : []),
    { kind: 'link', label: 'Open the standards register', href: mailLinks.standards(d.appUrl) },
  ]);
}

/** One line of {@link weeklyDueListMail}. */
export interface DueItem {
  tag: string;
  service?: string;
  jobId?: string;
  dueDate: When;
  overdue: boolean;
  assignee?: string;
}

/** Data of {@link weeklyDueListMail}. */
export interface WeeklyDueListData {
  appUrl: string;
  recipientName?: string;
  /** First day of the week the list covers. */
  weekOf: When;
  items: DueItem[];
}

/** The weekly list of overdue and due calibrations. */
export function weeklyDueListMail(d: WeeklyDueListData): RenderedMail {
  const overdue = d.items.filter((i) => i.overdue);
  const due = d.items.filter((i) => !i.overdue);
  const byDate = (a: DueItem, b: DueItem) => formatDate(a.dueDate).localeCompare(formatDate(b.dueDate)) || a.tag.localeCompare(b.tag);
  const rows = (items: DueItem[]) => [...items].sort(byDate).map((i) => [formatDate(i.dueDate), i.tag, i.service || '—', i.assignee ?? 'unassigned']);
  const head = ['Due', 'Tag', 'Service', 'Assigned to'];
  const blocks: Block[] = [
    { kind: 'p', text: `Calibrations for the week of ${formatDate(d.weekOf)}: ${overdue.length} overdue, ${due.length} due.` },
  ];
  if (overdue.length) blocks.push({ kind: 'p', text: 'Overdue' }, { kind: 'table', head, rows: rows(overdue) });
  if (due.length) blocks.push({ kind: 'p', text: 'Due' }, { kind: 'table', head, rows: rows(due) });
  if (d.items.length === 0) blocks.push({ kind: 'p', text: 'Nothing is due or overdue.' });
  blocks.push({ kind: 'link', label: 'Open the queue', href: mailLinks.queue(d.appUrl) });
  return compose(
    `Week of ${formatDate(d.weekOf)}: ${overdue.length} overdue, ${due.length} due`,
    d.recipientName ? `Hello ${d.recipientName}` : undefined,
    blocks,
  );
}
