/**
 * Calibration certificate PDF (pdfkit; Inter for text, JetBrains Mono for numbers, both embedded).
 *
 * README — what the certificate covers of ISO/IEC 17025:2017 §7.8 (clause numbers as we read the
 * 2017 edition; confirm against the standard before quoting them to an assessor):
 * - §7.8.2.1 common content: title; laboratory name and address; where the work was done
 *   (`placeOfWork`, including at the customer's site); a unique identification on every page and
 *   a marked end; customer name and address; the method (procedure, points, hold time) and any
 *   deviations from it; the item's description, identification and condition; the dates of
 *   calibration and of issue; the results with their units; the statement that the results relate
 *   only to the item calibrated; who authorised the certificate (the approval signature).
 * - §7.8.4.1 calibration certificates: expanded uncertainty per point (k = 2) in % of span; the
 *   environmental conditions; the metrological traceability (standards with serial, certificate
 *   and due date); results before and after adjustment (as-found, trims, as-left).
 * - §7.8.6 statement of conformity: the decision rule stated, and which results meet which
 *   specification (`conformityStatement`).
 * - §7.8.8 amendments: revision number, the reason, and that it replaces the earlier revision.
 * Not covered: sampling (§7.8.5, not applicable), opinions and interpretations (§7.8.7), and a
 * recommended calibration interval (§7.8.4.3 allows one only where agreed with the customer).
 * Signatures show name, date-time (UTC) and meaning, as 21 CFR 11.50 asks of signed records.
 * "Shall not be reproduced except in full" in the footer is common practice, not a §7.8 clause.
 */
import PDFDocument from 'pdfkit';
import { isPressureUnitId, PRESSURE_UNIT_LABELS } from '../../shared/calc';
import {
  certificateProblems,
  conformityStatement,
  decisionRuleStatement,
  decisionText,
  OUTPUT_MODE_TEXT,
  CertificateDataError,
  type CertificateData,
  type CertificateResults,
} from './certificate-data';
import { certificateFonts, fitToLatin, type FontRole } from './fonts';

const PAGE = { width: 595.28, height: 841.89 }; // A4 in points
const MARGIN = { top: 48, bottom: 72, left: 48, right: 48 };
const CONTENT_W = PAGE.width - MARGIN.left - MARGIN.right;
const BOTTOM = PAGE.height - MARGIN.bottom;

/** Our palette: slate ink, a calm teal accent, muted state colours. */
const COLOR = {
  ink: '#0f172a',
  muted: '#475569',
  faint: '#94a3b8',
  rule: '#cbd5e1',
  headFill: '#f1f5f9',
  zebra: '#f8fafc',
  accent: '#0f766e',
  pass: '#0f766e',
  conditional: '#a16207',
  fail: '#b91c1c',
  draft: '#fef3c7',
};

/** Numbers: ASCII minus (copy-paste into spreadsheets stays numeric), fixed decimals. */
function num(n: number | null | undefined, decimals: number, signed = false): string {
  if (n === null || n === undefined || !Number.isFinite(n)) return '—';
  const s = n.toFixed(decimals);
  const negZero = /^-0\.?0*$/.test(s);
  const clean = negZero ? s.slice(1) : s;
  return signed && !clean.startsWith('-') ? `+${clean}` : clean;
}

/** Decimals for DP values: about five significant figures of the span. */
function dpDecimals(span: number): number {
  const mag = Math.ceil(Math.log10(Math.abs(span) || 1));
  return Math.min(6, Math.max(0, 5 - mag));
}

/** Nominal % without trailing zeros: 6.25, 10, 56.25. */
function nominal(n: number): string {
  return String(Number(n.toFixed(3)));
}

function unitLabel(unit: string): string {
  return isPressureUnitId(unit) ? PRESSURE_UNIT_LABELS[unit] : unit;
}

function utc(iso: string): string {
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  const s = d.toISOString();
  return `${s.slice(0, 10)} ${s.slice(11, 16)} UTC`;
}

function dateOnly(iso: string): string {
  return /^\d{4}-\d{2}-\d{2}$/.test(iso) ? iso : new Date(iso).toISOString().slice(0, 10);
}

interface Column {
  header: string;
  width: number;
  align?: 'left' | 'right' | 'center';
  mono?: boolean;
}

interface Cell {
  text: string;
  color?: string;
  strong?: boolean;
}

type Doc = PDFKit.PDFDocument;

/** Layout helpers over one pdfkit document. */
class Writer {
  constructor(readonly doc: Doc) {}

  font(role: FontRole, size: number, color = COLOR.ink): Doc {
    return this.doc.font(role).fontSize(size).fillColor(color);
  }

  /** Start a new page when fewer than `h` points remain. */
  ensure(h: number): void {
    if (this.doc.y + h > BOTTOM) this.doc.addPage();
  }

  gap(h: number): void {
    this.doc.y += h;
  }

  /** A section heading, moved to the next page unless `keep` points fit below it. */
  heading(text: string, keep = 60): void {
    this.ensure(keep);
    this.gap(10);
    const y = this.doc.y;
    this.font('textStrong', 10.5, COLOR.accent).text(fitToLatin(text), MARGIN.left, y, { width: CONTENT_W });
    this.doc.moveTo(MARGIN.left, this.doc.y + 1).lineTo(PAGE.width - MARGIN.right, this.doc.y + 1).lineWidth(0.5).strokeColor(COLOR.rule).stroke();
    this.doc.y += 5;
  }

  paragraph(text: string, opts: { strong?: boolean; size?: number; color?: string } = {}): void {
    const size = opts.size ?? 8.5;
    const t = fitToLatin(text);
    this.font(opts.strong ? 'textStrong' : 'text', size, opts.color ?? COLOR.ink);
    // Keep a paragraph on one page when it fits on one; pdfkit flows longer ones on.
    this.ensure(Math.min(this.doc.heightOfString(t, { width: CONTENT_W, lineGap: 1.5 }), BOTTOM - MARGIN.top));
    this.doc.text(t, MARGIN.left, this.doc.y, { width: CONTENT_W, lineGap: 1.5 });
    this.gap(3);
  }

  /** Label / value pairs in two columns; values may be set in mono. */
  facts(rows: [string, string, boolean?][]): void {
    const colW = CONTENT_W / 2;
    const labelW = 92;
    for (let i = 0; i < rows.length; i += 2) {
      const pair = rows.slice(i, i + 2);
      const heights = pair.map(([label, value, mono]) => {
        this.font(mono ? 'mono' : 'text', 8.5);
        const hv = this.doc.heightOfString(fitToLatin(value), { width: colW - labelW - 8 });
        this.font('text', 7.5);
        return Math.max(hv, this.doc.heightOfString(fitToLatin(label), { width: labelW - 4 }));
      });
      const h = Math.max(...heights) + 4;
      this.ensure(h);
      const y = this.doc.y;
      pair.forEach(([label, value, mono], j) => {
        const x = MARGIN.left + j * colW;
        this.font('text', 7.5, COLOR.muted).text(fitToLatin(label), x, y + 1, { width: labelW - 4 });
        this.font(mono ? 'mono' : 'text', 8.5).text(fitToLatin(value), x + labelW, y, { width: colW - labelW - 8 });
      });
      this.doc.x = MARGIN.left;
      this.doc.y = y + h;
    }
  }

  /** A table with a shaded header row, repeated after a page break. */
  table(columns: Column[], rows: Cell[][], size = 8): void {
    const pad = 3;
    const headerHeight = () => {
      this.font('textStrong', 7);
      return Math.max(...columns.map((c) => this.doc.heightOfString(fitToLatin(c.header), { width: c.width - 2 * pad }))) + 2 * pad;
    };
    const drawHeader = () => {
      const h = headerHeight();
      const y = this.doc.y;
      this.doc.rect(MARGIN.left, y, CONTENT_W, h).fill(COLOR.headFill);
      let x = MARGIN.left;
      for (const c of columns) {
        this.font('textStrong', 7, COLOR.muted).text(fitToLatin(c.header), x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
        x += c.width;
      }
      this.doc.y = y + h;
    };
    const rowHeight = (row: Cell[]) =>
      Math.max(
        ...row.map((cell, i) => {
          const c = columns[i]!;
          this.font(c.mono ? (cell.strong ? 'monoStrong' : 'mono') : cell.strong ? 'textStrong' : 'text', size);
          return this.doc.heightOfString(fitToLatin(cell.text), { width: c.width - 2 * pad });
        }),
      ) +
      2 * pad;

    // Keep the header with at least a few rows.
    this.ensure(headerHeight() + rows.slice(0, 4).reduce((h, row) => h + rowHeight(row), 0) + 4);
    drawHeader();
    rows.forEach((row, r) => {
      const h = rowHeight(row);
      if (this.doc.y + h > BOTTOM) {
        this.doc.addPage();
        drawHeader();
      }
      const y = this.doc.y;
      if (r % 2 === 1) this.doc.rect(MARGIN.left, y, CONTENT_W, h).fill(COLOR.zebra);
      let x = MARGIN.left;
      row.forEach((cell, i) => {
        const c = columns[i]!;
        const role: FontRole = c.mono ? (cell.strong ? 'monoStrong' : 'mono') : cell.strong ? 'textStrong' : 'text';
        this.font(role, size, cell.color ?? COLOR.ink).text(fitToLatin(cell.text), x + pad, y + pad, { width: c.width - 2 * pad, align: c.align ?? 'left' });
        x += c.width;
      });
      this.doc.y = y + h;
    });
    this.doc
      .moveTo(MARGIN.left, this.doc.y)
      .lineTo(PAGE.width - MARGIN.right, this.doc.y)
      .lineWidth(0.5)
      .strokeColor(COLOR.rule)
      .stroke();
    this.doc.x = MARGIN.left;
    this.gap(4);
  }
}

function decisionColor(d: string): string {
  if (d === 'pass') return COLOR.pass;
  if (d === 'fail') return COLOR.fail;
  return COLOR.conditional;
}

function resultsTable(w: Writer, data: CertificateData, r: CertificateResults): void {
  const unit = data.instrument.range.unit;
  const dpDec = dpDecimals(data.instrument.range.urv - data.instrument.range.lrv);
  const basis = r.points[0]?.basis ?? data.method.basis;
  const k = r.points[0]?.coverageFactor ?? 2;
  const columns: Column[] = [
    { header: '#', width: 18, align: 'right', mono: true },
    { header: `Nominal\n% ${basis === 'flow' ? 'flow' : 'DP'}`, width: 42, align: 'right', mono: true },
    { header: 'Direction', width: 38 },
    { header: `Applied DP\n${unit}`, width: 62, align: 'right', mono: true },
    { header: 'Expected\nmA', width: 50, align: 'right', mono: true },
    { header: 'Measured\nmA', width: 50, align: 'right', mono: true },
    { header: 'Error\n% span', width: 48, align: 'right', mono: true },
    { header: `U (k = ${num(k, k % 1 === 0 ? 0 : 2)})\n% span`, width: 50, align: 'right', mono: true },
  ];
  // Applied flow only means something when the output is a flow signal.
  const showFlow = r.points.some((p) => p.appliedFlowPct !== null);
  if (showFlow) columns.splice(4, 0, { header: 'Applied\nflow %', width: 50, align: 'right', mono: true });
  const used = columns.reduce((s, c) => s + c.width, 0);
  columns.push({ header: 'Decision', width: CONTENT_W - used });
  const rows: Cell[][] = r.points.map((p, i) => [
    { text: String(i + 1) },
    { text: nominal(p.nominalPct) },
    { text: p.direction },
    { text: num(p.appliedDp, dpDec) },
    ...(showFlow ? [{ text: num(p.appliedFlowPct, 3) }] : []),
    { text: num(p.expectedMa, 4) },
    { text: num(p.measuredMa, 4) },
    { text: num(p.errorPctSpan, 3, true) },
    { text: num(p.expandedUncertaintyPctSpan, 3) },
    { text: decisionText(p.decision), color: decisionColor(p.decision), strong: p.decision !== 'pass' },
  ]);
  w.table(columns, rows);
  const summary: [string, string, boolean?][] = [
    ['Overall', decisionText(r.overallDecision)],
    ['Largest hysteresis', r.maxHysteresisPctSpan === null ? '—' : `${num(r.maxHysteresisPctSpan, 3)} % of span`, true],
  ];
  w.facts(summary);
}

function standardsTable(w: Writer, data: CertificateData): void {
  const performedOn = dateOnly(data.performed.start);
  const columns: Column[] = [
    { header: 'Used for', width: 70 },
    { header: 'Standard', width: 150 },
    { header: 'Serial', width: 70, mono: true },
    { header: 'Certificate', width: 90, mono: true },
    { header: 'Calibrated by', width: 0 },
    { header: 'Due', width: 62, mono: true },
  ];
  columns[4]!.width = CONTENT_W - columns.reduce((s, c) => s + c.width, 0);
  const expired = data.standards.filter((s) => s.dueDate < performedOn);
  w.table(
    columns,
    data.standards.map((s) => [
      { text: s.role ?? '' },
      { text: s.description },
      { text: s.serial },
      { text: s.certificateNumber },
      { text: s.calibratedBy ?? '' },
      { text: s.dueDate, ...(s.dueDate < performedOn ? { color: COLOR.fail, strong: true } : {}) },
    ]),
  );
  w.paragraph(
    'Each reference standard holds a calibration certificate that links its values to the SI through an unbroken chain of calibrations, each with a stated uncertainty.' +
      (expired.length === 0
        ? ` All were within their calibration due dates on ${performedOn}.`
        : ` ${expired.map((s) => s.serial).join(', ')} ${expired.length === 1 ? 'was' : 'were'} past the due date on ${performedOn}.`),
  );
}

function hysteresisTable(w: Writer, data: CertificateData): void {
  const found = new Map(data.asFound.hysteresis.map((h) => [`${h.basis}:${h.nominalPct}`, h]));
  const left = new Map((data.asLeft?.hysteresis ?? []).map((h) => [`${h.basis}:${h.nominalPct}`, h]));
  const keys = [...new Set([...found.keys(), ...left.keys()])];
  if (keys.length === 0) {
    w.paragraph('No point was measured in both directions, so hysteresis was not evaluated.');
    return;
  }
  const columns: Column[] = [
    { header: 'Nominal', width: 90, align: 'right', mono: true },
    { header: 'As found\n% span', width: 90, align: 'right', mono: true },
    { header: 'As left\n% span', width: 90, align: 'right', mono: true },
    { header: '', width: CONTENT_W - 270 },
  ];
  const rows = keys.map((k) => {
    const f = found.get(k);
    const l = left.get(k);
    const h = (f ?? l)!;
    return [
      { text: `${nominal(h.nominalPct)} % ${h.basis === 'flow' ? 'flow' : 'DP'}` },
      { text: num(f?.hysteresisPctSpan, 3) },
      { text: data.asLeft ? num(l?.hysteresisPctSpan, 3) : 'as found' },
      { text: '' },
    ];
  });
  w.table(columns, rows);
}

function trimsSection(w: Writer, data: CertificateData): void {
  if (data.trims.length === 0) {
    w.paragraph('No adjustment was made.');
    return;
  }
  const names: Record<string, string> = { 'zero-trim': 'Zero trim', 'lower-trim': 'Lower trim', 'span-trim': 'Span trim' };
  const dpDec = dpDecimals(data.instrument.range.urv - data.instrument.range.lrv);
  const columns: Column[] = [
    { header: 'Trim', width: 90 },
    { header: `Applied DP\n${data.instrument.range.unit}`, width: 80, align: 'right', mono: true },
    { header: 'Target\nmA', width: 70, align: 'right', mono: true },
    { header: 'Before\nmA', width: 70, align: 'right', mono: true },
    { header: 'After\nmA', width: 70, align: 'right', mono: true },
    { header: '', width: CONTENT_W - 380 },
  ];
  w.table(
    columns,
    data.trims.map((t) => [
      { text: names[t.kind] ?? t.kind },
      { text: num(t.appliedDp, dpDec) },
      { text: num(t.targetMa, 4) },
      { text: num(t.beforeMa, 4) },
      { text: num(t.afterMa, 4) },
      { text: '' },
    ]),
  );
}

function firstPageHeader(w: Writer, data: CertificateData): void {
  const { doc } = w;
  const leftW = CONTENT_W * 0.58;
  const rightX = MARGIN.left + leftW;
  const rightW = CONTENT_W - leftW;
  const top = MARGIN.top;
  w.font('textStrong', 13).text(fitToLatin(data.laboratory.name), MARGIN.left, top, { width: leftW - 12 });
  w.font('text', 8.5, COLOR.muted);
  for (const line of data.laboratory.address) doc.text(fitToLatin(line), MARGIN.left, doc.y, { width: leftW - 12 });
  if (data.laboratory.contact) doc.text(fitToLatin(data.laboratory.contact), MARGIN.left, doc.y, { width: leftW - 12 });
  const leftBottom = doc.y;

  w.font('textStrong', 15).text('Calibration certificate', rightX, top, { width: rightW, align: 'right' });
  doc.y += 2;
  w.font('monoStrong', 11).text(fitToLatin(data.certificateNumber), rightX, doc.y, { width: rightW, align: 'right' });
  w.font('text', 8.5, COLOR.muted).text(`Issued ${data.issueDate} · Revision ${data.revision}`, rightX, doc.y + 2, { width: rightW, align: 'right' });
  const bottom = Math.max(leftBottom, doc.y) + 8;
  doc.moveTo(MARGIN.left, bottom).lineTo(PAGE.width - MARGIN.right, bottom).lineWidth(1.5).strokeColor(COLOR.accent).stroke();
  doc.x = MARGIN.left;
  doc.y = bottom + 8;

  if (data.draft) {
    const y = doc.y;
    doc.rect(MARGIN.left, y, CONTENT_W, 22).fill(COLOR.draft);
    w.font('textStrong', 9, COLOR.conditional).text('DRAFT — not approved. This is not a valid certificate.', MARGIN.left + 8, y + 6.5, { width: CONTENT_W - 16 });
    doc.x = MARGIN.left;
    doc.y = y + 30;
  }
  if (data.revision > 1) {
    w.paragraph(`Revision ${data.revision}. This revision replaces revision ${data.revision - 1} of certificate ${data.certificateNumber}, which is withdrawn. Reason: ${data.revisionReason ?? ''}`, { strong: true });
  }
}

function writeBody(w: Writer, data: CertificateData): void {
  const ins = data.instrument;
  const dpDec = dpDecimals(ins.range.urv - ins.range.lrv);
  const rooted = ins.outputMode === 'sqrt-transmitter';

  w.heading('Customer and item');
  const item: [string, string, boolean?][] = [
    ['Customer', [data.customer.name, ...data.customer.address, ...(data.customer.contact ? [data.customer.contact] : [])].join('\n')],
    ['Place of work', data.placeOfWork],
    ['Tag', ins.tag, true],
    ['Description', ins.description ?? 'Differential-pressure transmitter'],
  ];
  if (ins.manufacturer || ins.model) item.push(['Make and model', [ins.manufacturer, ins.model].filter(Boolean).join(' ')]);
  if (ins.serialNumber) item.push(['Serial number', ins.serialNumber, true]);
  if (ins.service) item.push(['Service', ins.service]);
  if (ins.location) item.push(['Location', ins.location]);
  item.push(['Condition on receipt', ins.condition ?? 'Not recorded']);
  w.facts(item);

  w.heading('Configuration and specification');
  const cutoff = ins.cutoff ?? { mode: 'none' as const };
  const cutoffText =
    ins.outputMode === 'linear' || cutoff.mode === 'none'
      ? 'None'
      : cutoff.mode === 'clamp'
        ? `Output held at 4 mA below ${num(cutoff.value, 2)} % flow`
        : `Linear below ${num(cutoff.value, 2)} % DP`;
  w.facts([
    ['Range', `${num(ins.range.lrv, dpDec)} to ${num(ins.range.urv, dpDec)} ${ins.range.unit}`, true],
    ['Unit', unitLabel(ins.range.unit)],
    ['Output', OUTPUT_MODE_TEXT[ins.outputMode]],
    ['Low-flow cutoff', cutoffText],
    ['Tolerance', `±${num(ins.tolerancePctSpan, 2)} % of ${rooted ? 'flow' : 'output'} span`, true],
  ]);

  w.heading('Method');
  const m = data.method;
  const basisWord = m.basis === 'flow' ? 'flow' : 'DP';
  const method: [string, string, boolean?][] = [
    ['Procedure', m.procedure],
    ['Hold per point', `${num(m.holdSeconds, 0)} s`, true],
    ['Points up', `${m.pointsUp.map(nominal).join(', ')} % ${basisWord}`, true],
    ['Points down', `${m.pointsDown.map(nominal).join(', ')} % ${basisWord}`, true],
    ['Performed', data.performed.end ? `${utc(data.performed.start)} to ${utc(data.performed.end)}` : utc(data.performed.start), true],
  ];
  w.facts(method);
  w.paragraph(
    'Each point was approached from below on the way up and from above on the way down, and captured as the mean of the applied DP and the loop current over the hold, once both were stable and no leak was detected.',
  );
  if (m.deviations?.length) for (const d of m.deviations) w.paragraph(`Deviation from the method: ${d}`);

  w.heading('Environmental conditions');
  const env = data.environment;
  const envRows: [string, string, boolean?][] = [
    ['Temperature', env?.temperatureC === undefined ? 'Not recorded' : `${num(env.temperatureC, 1)} °C`, env?.temperatureC !== undefined],
    ['Relative humidity', env?.humidityPctRh === undefined ? 'Not recorded' : `${num(env.humidityPctRh, 0)} %rh`, env?.humidityPctRh !== undefined],
  ];
  if (env?.note) envRows.push(['Note', env.note]);
  w.facts(envRows);

  w.heading('Reference standards and traceability', 140);
  standardsTable(w, data);

  w.heading('Results as found', 140);
  resultsTable(w, data, data.asFound);

  w.heading('Adjustment', 140);
  trimsSection(w, data);

  w.heading('Results as left', 140);
  if (data.asLeft) resultsTable(w, data, data.asLeft);
  else w.paragraph('No adjustment was made; the as-found results above are also the as-left results.');

  w.heading('Hysteresis', 140);
  hysteresisTable(w, data);

  w.heading('Measurement uncertainty');
  const k = data.asFound.points[0]?.coverageFactor ?? 2;
  w.paragraph(
    `U is the expanded uncertainty of each point in % of ${rooted ? 'flow' : 'output'} span, the standard uncertainty multiplied by the coverage factor k = ${num(k, k % 1 === 0 ? 0 : 2)}, which for a normal distribution gives a coverage probability of about 95 %. It was evaluated per JCGM 100:2008 (GUM) from the reference standards' specifications, the meter's resolution and the repeatability over the hold. Errors are (measured − expected)/16 mA × 100.`,
  );

  w.heading('Decision rule and statement of conformity');
  w.paragraph(`Decision rule. ${decisionRuleStatement(data.decisionRule)}`);
  for (const s of conformityStatement(data)) w.paragraph(s, { strong: true });

  w.heading('Remarks');
  for (const r of data.remarks ?? []) w.paragraph(r);
  w.paragraph('The results relate only to the item calibrated, as received and at the time of calibration.');

  w.heading('Authorisation', 140);
  const roleText = { performed: 'Performed by', reviewed: 'Reviewed by', approved: 'Approved by' } as const;
  if (data.signatures.length) {
    w.table(
      [
        { header: 'Role', width: 80 },
        { header: 'Name', width: 140 },
        { header: 'Meaning of signature', width: CONTENT_W - 80 - 140 - 112 },
        { header: 'Signed (UTC)', width: 112, mono: true },
      ],
      data.signatures.map((s) => [{ text: roleText[s.role] }, { text: s.title ? `${s.name}\n${s.title}` : s.name }, { text: s.meaning }, { text: utc(s.signedAt) }]),
    );
  }
  w.paragraph('Signed electronically. Each signature records the signer’s name, the date and time and the meaning of the signature, and is linked to this record in the audit trail.', {
    color: COLOR.muted,
    size: 7.5,
  });
  w.gap(8);
  w.ensure(14);
  w.font('textStrong', 8.5, COLOR.muted).text('End of certificate', MARGIN.left, w.doc.y, { width: CONTENT_W, align: 'center' });
}

/**
 * Drawn after the body, on every page: the identification at the top of pages after the first,
 * and the footer with the reproduction note and page x of y.
 */
function writePageFurniture(doc: Doc, data: CertificateData): void {
  const range = doc.bufferedPageRange();
  const head = fitToLatin(`Calibration certificate ${data.certificateNumber} · revision ${data.revision} · ${data.instrument.tag}`);
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    if (i > range.start) {
      doc.font('text').fontSize(8).fillColor(COLOR.muted).text(head, MARGIN.left, MARGIN.top - 20, { width: CONTENT_W, lineBreak: false });
      doc.moveTo(MARGIN.left, MARGIN.top - 8).lineTo(PAGE.width - MARGIN.right, MARGIN.top - 8).lineWidth(0.5).strokeColor(COLOR.rule).stroke();
    }
    // Writing below the bottom margin would make pdfkit start a new page.
    const saved = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    const y = PAGE.height - MARGIN.bottom + 18;
    doc.moveTo(MARGIN.left, y).lineTo(PAGE.width - MARGIN.right, y).lineWidth(0.5).strokeColor(COLOR.rule).stroke();
    doc
      .font('mono')
      .fontSize(7.5)
      .fillColor(COLOR.muted)
      .text(fitToLatin(`${data.certificateNumber} · rev ${data.revision}`), MARGIN.left, y + 6, { width: CONTENT_W / 2, lineBreak: false });
    doc.font('text').fontSize(7.5).text(`Page ${i - range.start + 1} of ${range.count}`, MARGIN.left + CONTENT_W / 2, y + 6, { width: CONTENT_W / 2, align: 'right', lineBreak: false });
    doc
      .font('text')
      .fontSize(7)
      .fillColor(COLOR.faint)
      .text('This certificate shall not be reproduced except in full without the written approval of the issuing laboratory.', MARGIN.left, y + 18, {
        width: CONTENT_W,
        lineBreak: false,
      });
    doc.page.margins.bottom = saved;
  }
}

/**
 * Render a calibration certificate to PDF bytes. The output is deterministic for the same data
 * (the PDF's dates come from the issue date, not the clock).
 * @throws CertificateDataError when the data cannot make a certificate (see `certificateProblems`)
 */
export async function renderCertificate(data: CertificateData): Promise<Buffer> {
  const problems = certificateProblems(data);
  if (problems.length) throw new CertificateDataError(problems);
  const issued = new Date(`${data.issueDate}T00:00:00Z`);
  const doc = new PDFDocument({
    size: 'A4',
    margins: MARGIN,
    bufferPages: true,
    pdfVersion: '1.7',
    lang: 'en',
    displayTitle: true,
    info: {
      Title: fitToLatin(`Calibration certificate ${data.certificateNumber} — ${data.instrument.tag}`),
      Author: fitToLatin(data.laboratory.name),
      Subject: fitToLatin(`Calibration of ${data.instrument.tag}, revision ${data.revision}`),
      Creator: 'Stillpoint',
      Producer: 'Stillpoint',
      CreationDate: issued,
      ModDate: issued,
    },
  });
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });
  const fonts = certificateFonts();
  for (const [role, bytes] of Object.entries(fonts)) doc.registerFont(role, bytes);

  const w = new Writer(doc);
  firstPageHeader(w, data);
  writeBody(w, data);
  writePageFurniture(doc, data);
  doc.end();
  return done;
}
