/**
 * The sections of the calibration certificate, each drawn from `CertificateData` with the PDF
 * writer: header, item, configuration, method (with how each point was captured), environment,
 * standards, results, adjustment, hysteresis, uncertainty, decision rule, remarks and
 * authorisation. A new section is a function here and a line in `writeBody`.
 */
import {
  conformityStatement,
  decisionRuleStatement,
  OUTPUT_MODE_TEXT,
  type CertificateData,
} from './certificate-data';
import { fitToLatin } from './fonts';
import { COLOR, CONTENT_W, dateTime, dpDecimals, MARGIN, nominal, num, PAGE, unitLabel, type Writer } from './pdf-writer';
import { hysteresisTable, resultsTable, standardsTable, trimsSection } from './certificate-tables';
import { hartSection } from './certificate-hart';

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
  hartSection(w, data, data.timeZone);

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
