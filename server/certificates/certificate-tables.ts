/**
 * The certificate's tables: results (errors, uncertainty, decision per point), flow, reference
 * standards, hysteresis and the adjustment, each drawn from `CertificateData` with the PDF writer.
 */
import { decisionText, type CertificateData, type CertificateResults } from './certificate-data';
import { COLOR, CONTENT_W, dateOnly, dpDecimals, nominal, num, unitLabel, type Cell, type Column, type Writer } from './pdf-writer';
import { flowDecimals } from '../../shared/format';

/** What errors are a percentage of: flow span for a root in the transmitter, else output span. */
export function spanWord(data: CertificateData): string {
  return data.instrument.outputMode === 'sqrt-transmitter' ? 'flow span' : 'span';
}

export function decisionColor(d: string): string {
  if (d === 'pass') return COLOR.pass;
  if (d === 'fail') return COLOR.fail;
  return COLOR.conditional;
}

export function resultsTable(w: Writer, data: CertificateData, r: CertificateResults): void {
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
export function flowTable(w: Writer, data: CertificateData, r: CertificateResults): void {
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

export function standardsTable(w: Writer, data: CertificateData): void {
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

export function hysteresisTable(w: Writer, data: CertificateData): void {
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

export function trimsSection(w: Writer, data: CertificateData): void {
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
