/**
 * The sections of the calibration certificate, each drawn from `CertificateData` with the PDF
 * writer: header, item, configuration, method (with how each point was captured), environment,
 * standards, results, adjustment, hysteresis, uncertainty, decision rule, remarks and
 * authorisation. A new section is a function here and a line in `writeBody`.
 */
import {
  conformityStatement,
  decisionRuleStatement,
  decisionText,
  OUTPUT_MODE_TEXT,
  type CertificateData,
  type CertificateResults,
} from './certificate-data';
import { fitToLatin } from './fonts';
import { COLOR, CONTENT_W, dateOnly, dateTime, dpDecimals, MARGIN, nominal, num, PAGE, unitLabel, type Cell, type Column, type Writer } from './pdf-writer';
import { flowDecimals } from '../../shared/format';

/** What errors are a percentage of: flow span for a root in the transmitter, else output span. */
function spanWord(data: CertificateData): string {
  return data.instrument.outputMode === 'sqrt-transmitter' ? 'flow span' : 'span';
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
  // Each point's U has its own coverage factor, k = t_p(ν_eff) of that point (GUM G.3–G.4), so k is a column.
  const columns: Column[] = [
    { header: '#', width: 18, align: 'right', mono: true },
    { header: `Nominal\n% ${basis === 'flow' ? 'flow' : 'DP'}`, width: 42, align: 'right', mono: true },
    { header: 'Direction', width: 38 },
    { header: `Applied DP\n${unitLabel(unit)}`, width: 62, align: 'right', mono: true },
    { header: 'Expected\nmA', width: 50, align: 'right', mono: true },
    { header: 'Measured\nmA', width: 50, align: 'right', mono: true },
    { header: `Error\n% ${spanWord(data)}`, width: 48, align: 'right', mono: true },
    { header: `U\n% ${spanWord(data)}`, width: 44, align: 'right', mono: true },
    { header: 'k', width: 26, align: 'right', mono: true },
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
    { text: p.expandedUncertaintyPctSpan === null ? '—' : num(p.coverageFactor, 2) },
    { text: decisionText(p.decision), color: decisionColor(p.decision), strong: p.decision !== 'pass' },
  ]);
  w.table(columns, rows);
  const summary: [string, string, boolean?][] = [
    ['Overall', decisionText(r.overallDecision)],
    ['Largest hysteresis', r.maxHysteresisPctSpan === null ? '—' : `${num(r.maxHysteresisPctSpan, 3)} % of ${spanWord(data)}`, true],
  ];
  w.facts(summary);
  flowTable(w, data, r);
}

/**
 * Flow in engineering units beside % flow, when the instrument has an orifice primary element:
 * the ISO 5167-2 flow at each applied DP with the discharge coefficient C, expansibility expansibility and
 * Re_D it used, and how far the constant-C square-root law departs from it (largest at low flow).
 */
function flowTable(w: Writer, data: CertificateData, r: CertificateResults): void {
  const withFlow = r.points.filter((p) => p.flow);
  if (withFlow.length === 0) return;
  const flowUnit = withFlow[0]!.flow!.unit;
  const full = Math.max(...withFlow.map((p) => p.flow!.flow));
  const dec = flowDecimals(full);
  const dpDec = dpDecimals(data.instrument.range.urv - data.instrument.range.lrv);
  const columns: Column[] = [
    { header: '#', width: 18, align: 'right', mono: true },
    { header: 'Applied\nflow %', width: 50, align: 'right', mono: true },
    { header: `Applied DP\n${unitLabel(data.instrument.range.unit)}`, width: 70, align: 'right', mono: true },
    { header: `Flow\n${unitLabel(flowUnit)}`, width: 70, align: 'right', mono: true },
    { header: 'C', width: 50, align: 'right', mono: true },
    { header: 'Expan-\nsibility', width: 50, align: 'right', mono: true },
    { header: 'Re_D', width: 60, align: 'right', mono: true },
  ];
  const used = columns.reduce((s, c) => s + c.width, 0);
  columns.push({ header: 'Constant-C root\ndeparture %', width: CONTENT_W - used, align: 'right', mono: true });
  const rows: Cell[][] = r.points.map((p, i) => [
    { text: String(i + 1) },
    { text: num(p.appliedFlowPct, 3) },
    { text: num(p.appliedDp, dpDec) },
    { text: p.flow ? num(p.flow.flow, dec) : '—' },
    { text: p.flow ? num(p.flow.C, 5) : '—' },
    { text: p.flow ? num(p.flow.epsilon, 5) : '—' },
    { text: p.flow ? num(p.flow.reD, 0) : '—' },
    { text: p.flow ? num(p.flow.pureRootDeparturePct, 2, true) : '—' },
  ]);
  w.paragraph(`Flow in engineering units (${unitLabel(flowUnit)}) from the orifice primary element by ISO 5167-2:2003 (discharge coefficient C by Reader-Harris/Gallagher, expansibility factor), at the DP applied at each point. The last column is how far a constant-C square-root law, scaled to the flow at the upper range value, departs from that flow: (q_root − q_ISO)/q_ISO.`, { size: 8 });
  w.table(columns, rows);
}

function standardsTable(w: Writer, data: CertificateData): void {
  const performedOn = dateOnly(data.performed.start, data.timeZone);
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
    { header: `As found\n% ${spanWord(data)}`, width: 90, align: 'right', mono: true },
    { header: `As left\n% ${spanWord(data)}`, width: 90, align: 'right', mono: true },
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
    { header: 'Trim', width: 70 },
    { header: `Applied DP\n${unitLabel(data.instrument.range.unit)}`, width: 70, align: 'right', mono: true },
    { header: 'Target\nmA', width: 56, align: 'right', mono: true },
    { header: 'Before\nmA', width: 62, align: 'right', mono: true },
    { header: `Before, error\n% ${spanWord(data)}`, width: 70, align: 'right', mono: true },
    { header: 'After\nmA', width: 62, align: 'right', mono: true },
    { header: `After, error\n% ${spanWord(data)}`, width: 70, align: 'right', mono: true },
  ];
  columns.push({ header: '', width: CONTENT_W - columns.reduce((a, c) => a + c.width, 0) });
  w.table(
    columns,
    data.trims.map((t) => [
      { text: names[t.kind] ?? t.kind },
      { text: num(t.appliedDp, dpDec) },
      { text: num(t.targetMa, 4) },
      { text: num(t.beforeMa, 4) },
      { text: num(t.beforeErrorPctSpan, 3, true) },
      { text: num(t.afterMa, 4) },
      { text: num(t.afterErrorPctSpan, 3, true) },
      { text: '' },
    ]),
  );
  w.paragraph('Before: the reading of the first trim run, taken before the adjustment. After: the reading of the last trim run of the same kind, taken after it (a dash when the trim was read once).', {
    color: COLOR.muted,
    size: 7.5,
  });
}

export function firstPageHeader(w: Writer, data: CertificateData): void {
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

/** How the points were captured: hands-free after the hold, and each manual capture with who and why. */
function methodCaptures(w: Writer, data: CertificateData): void {
  const approach = 'Each point was approached from below on the way up and from above on the way down.';
  const handsFree = 'the mean of the applied DP and the loop current over the hold, taken hands-free once both were stable and no leak was detected over the hold';
  const c = data.method.captures;
  if (!c || c.manual.length === 0) {
    w.paragraph(`${approach} ${c ? `All ${c.handsFree} points reported were` : 'Every point was'} captured as ${handsFree}.`);
    return;
  }
  const total = c.handsFree + c.manual.length;
  w.paragraph(`${approach} ${c.handsFree} of the ${total} points reported were captured as ${handsFree}; ${c.manual.length === 1 ? 'one was' : `${c.manual.length} were`} captured manually, as follows.`);
  for (const m of c.manual) w.paragraph(`Deviation from the method: ${m}`);
}

export function writeBody(w: Writer, data: CertificateData): void {
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
    ['Range', `${num(ins.range.lrv, dpDec)} to ${num(ins.range.urv, dpDec)} ${unitLabel(ins.range.unit)}`, true],
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
    ['Performed', data.performed.end ? `${dateTime(data.performed.start, data.timeZone)} to ${dateTime(data.performed.end, data.timeZone)}` : dateTime(data.performed.start, data.timeZone), true],
  ];
  w.facts(method);
  methodCaptures(w, data);
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
  w.paragraph(
    `U is the expanded uncertainty of each point in % of ${rooted ? 'flow' : 'output'} span, the standard uncertainty multiplied by ${coverageStatement(data)}. It was evaluated per JCGM 100:2008 (GUM) from the reference standards' specifications, the meter's resolution and the repeatability over the hold. Errors are (measured − expected)/16 mA × 100, the expected current taken at the DP actually applied; hysteresis at a nominal point is the difference between its upscale and downscale errors.`,
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
        { header: 'Signed', width: 112, mono: true },
      ],
      data.signatures.map((s) => [{ text: roleText[s.role] }, { text: s.title ? `${s.name}\n${s.title}` : s.name }, { text: s.meaning }, { text: dateTime(s.signedAt, data.timeZone) }]),
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
 * How the coverage factors were chosen, from the points' own k and ν_eff: a fixed k when the site
 * fixes it, else k = t_p(ν_eff) per point (Student's t at the Welch–Satterthwaite effective degrees
 * of freedom, JCGM 100:2008 G.3–G.4), with the range of k that occurs.
 */
function coverageStatement(data: CertificateData): string {
  const pts = [...data.asFound.points, ...(data.asLeft?.points ?? [])].filter((p) => p.expandedUncertaintyPctSpan !== null && p.coverageFactor !== null);
  const ks = pts.map((p) => p.coverageFactor!);
  if (ks.length === 0) return 'a coverage factor k (no point had a computable uncertainty)';
  const fixed = pts.every((p) => p.coverageProbability === null || p.coverageProbability === undefined);
  const lo = Math.min(...ks);
  const hi = Math.max(...ks);
  if (fixed) return `the coverage factor k = ${num(lo, lo % 1 === 0 ? 0 : 2)} fixed by the site, which for a normal distribution gives a coverage probability of about 95 %`;
  const p = pts[0]!.coverageProbability!;
  const range = Math.abs(hi - lo) < 0.005 ? `k = ${num(lo, 2)} at every point` : `k from ${num(lo, 2)} to ${num(hi, 2)}, given for each point in the results`;
  // No Greek letters: the certificate's font subset is latin (fonts.ts).
  return `the coverage factor k of Student's t distribution at each point's effective degrees of freedom (Welch–Satterthwaite formula, JCGM 100:2008, G.3–G.4) for a coverage probability of ${num(p * 100, 2)} %, ${range}`;
}
