/**
 * What a calibration certificate says, as plain data, and the wording derived from it (decision
 * rule, statement of conformity). The service layer fills this from the job, the instrument and
 * standards registers, the runs' evaluated results and the signatures; the renderer only lays it
 * out.
 */
import { formatFixed } from '../../shared/format';
import type { Decision, DecisionRule, NominalBasis, OutputMode, TrimKind } from '../../shared/calc';
import type { ResultPoint, RunResults } from '../../shared/schemas/runs';
import type { FrozenHart } from '../../shared/schemas/hart-job';

/** A name with a postal address (laboratory, customer). */
export interface CertificateParty {
  name: string;
  /** Address lines, top to bottom. */
  address: string[];
  /** Telephone or mail, optional. */
  contact?: string;
}

/** One results point, a subset of the results contract (shared/schemas/runs `ResultPointSchema`). */
export type CertificatePoint = Pick<
  ResultPoint,
  | 'nominalPct'
  | 'basis'
  | 'direction'
  | 'appliedDp'
  | 'appliedFlowPct'
  | 'expectedMa'
  | 'measuredMa'
  | 'errorPctSpan'
  | 'expandedUncertaintyPctSpan'
  | 'coverageFactor'
  | 'coverageProbability'
  | 'effectiveDof'
  | 'decision'
> &
  /** Flow in engineering units at the applied DP (orifice primary element, ISO 5167-2); absent otherwise. */
  Partial<Pick<ResultPoint, 'flow'>>;

/**
 * One set of results (as found or as left). The calc engine's `EvaluateOutput` is assignable to
 * this type as is.
 */
export interface CertificateResults {
  points: CertificatePoint[];
  hysteresis: RunResults['hysteresis'];
  maxHysteresisPctSpan: number | null;
  overallDecision: Decision;
}

/** A reference standard used, with its traceability. */
export interface CertificateStandard {
  /** What it measured in this calibration, e.g. `Applied DP` or `Loop current`. */
  role?: string;
  description: string;
  serial: string;
  /** Number of the standard's own calibration certificate. */
  certificateNumber: string;
  /** Who calibrated the standard (traceability chain), optional. */
  calibratedBy?: string;
  /** Due date of the standard's calibration, `YYYY-MM-DD`. */
  dueDate: string;
}

/**
 * One trim performed between as-found and as-left: the reading of its first trim run (before the
 * adjustment) and of its last (after it), as the job page shows them.
 */
export interface CertificateTrim {
  kind: TrimKind;
  /** DP applied for the trim (the plan's target), instrument unit, optional. */
  appliedDp?: number;
  /** Current the trim aimed at, mA. */
  targetMa: number;
  /** Current read before the trim (first trim run), mA. */
  beforeMa: number;
  /** Its error as evaluated for the run, % of output span (flow span for a rooted output). */
  beforeErrorPctSpan?: number | null;
  /** Current read after the trim (last trim run), mA; absent when the trim was read only once. */
  afterMa?: number;
  afterErrorPctSpan?: number | null;
}

/** How the points were captured: hands-free after the hold, or manually (each listed in the method). */
export interface CertificateCaptures {
  /** Points captured hands-free, over all runs shown. */
  handsFree: number;
  /** One sentence per manual capture: which point, who, and the reason given. */
  manual: string[];
}

/** An electronic signature on the record (21 CFR 11.50: name, date and time, meaning). */
export interface CertificateSignature {
  role: 'performed' | 'reviewed' | 'approved';
  name: string;
  /** Job title, optional. */
  title?: string;
  /** The meaning stated at signing, e.g. `Calibration performed` or `Reviewed and approved`. */
  meaning: string;
  /** Date and time of signing, ISO 8601 (shown in UTC). */
  signedAt: string;
}

/** Everything a certificate shows. Dates are `YYYY-MM-DD`, date-times ISO 8601. */
export interface CertificateData {
  certificateNumber: string;
  issueDate: string;
  /**
   * Date-time of issue (the approval signature), ISO 8601: the PDF's creation and modification
   * dates, so the same record gives the same bytes. Default: midnight UTC of `issueDate`.
   */
  issuedAt?: string;
  /** 1 for the first issue; each correction issues the next revision. */
  revision: number;
  /** The site's time zone (IANA name): dates and times are printed in it with their UTC offset. Default UTC. */
  timeZone?: string;
  /** Required when `revision` > 1: why this revision replaces the previous one. */
  revisionReason?: string;
  /** A draft prints a banner and needs no approval signature; it is not a valid certificate. */
  draft?: boolean;
  laboratory: CertificateParty;
  /** Where the work was done, e.g. `At the customer's site: boiler house, bench 2`. */
  placeOfWork: string;
  customer: CertificateParty;
  instrument: {
    tag: string;
    description?: string;
    manufacturer?: string;
    model?: string;
    serialNumber?: string;
    service?: string;
    location?: string;
    range: { lrv: number; urv: number; /** A calc unit id or a label. */ unit: string };
    outputMode: OutputMode;
    cutoff?: { mode: 'none' | 'clamp' | 'linear'; /** clamp: % flow; linear: breakpoint % DP. */ value?: number };
    /** Tolerance, ± % of output span (of flow span for a square-root output). */
    tolerancePctSpan: number;
    /** Condition on receipt, e.g. `No visible damage`. */
    condition?: string;
  };
  method: {
    /** Procedure identification and a short description. */
    procedure: string;
    /** Basis of the test points. */
    basis: NominalBasis;
    /** Nominal % of the upscale points, in order. */
    pointsUp: number[];
    /** Nominal % of the downscale points, in order. */
    pointsDown: number[];
    /** Hold time per point, seconds. */
    holdSeconds: number;
    /** Deviations from, additions to or exclusions from the method. */
    deviations?: string[];
    /** How the points were captured; absent: every point hands-free (sample data). */
    captures?: CertificateCaptures;
  };
  /** When the calibration was performed (ISO date-times). */
  performed: { start: string; end?: string };
  environment?: { temperatureC?: number; humidityPctRh?: number; note?: string };
  standards: CertificateStandard[];
  decisionRule: DecisionRule;
  asFound: CertificateResults;
  /** Absent when no adjustment was made (the as-found results stand as the as-left ones). */
  asLeft?: CertificateResults;
  trims: CertificateTrim[];
  /** The HART device of the job, from the frozen record (certificate-hart.ts); absent without one. */
  hart?: FrozenHart;
  remarks?: string[];
  signatures: CertificateSignature[];
}

/** Data a certificate cannot be issued from; `problems` lists each reason. */
export class CertificateDataError extends Error {
  constructor(readonly problems: string[]) {
    super(`Certificate data is incomplete: ${problems.join('; ')}`);
    this.name = 'CertificateDataError';
  }
}

/** Reasons the data cannot make a certificate; empty when it can. */
export function certificateProblems(d: CertificateData): string[] {
  const p: string[] = [];
  if (!d.certificateNumber.trim()) p.push('certificate number is empty');
  if (!/^\d{4}-\d{2}-\d{2}$/.test(d.issueDate)) p.push('issue date must be YYYY-MM-DD');
  if (!Number.isInteger(d.revision) || d.revision < 1) p.push('revision must be an integer ≥ 1');
  if (d.revision > 1 && !d.revisionReason?.trim()) p.push('a revision after the first needs a reason');
  if (!d.laboratory.name.trim()) p.push('laboratory name is empty');
  if (!d.customer.name.trim()) p.push('customer name is empty');
  if (!d.instrument.tag.trim()) p.push('instrument tag is empty');
  if (!(d.instrument.tolerancePctSpan > 0)) p.push('tolerance must be > 0 % of span');
  if (d.standards.length === 0) p.push('no reference standards listed (traceability)');
  if (d.asFound.points.length === 0) p.push('no as-found results');
  if (d.asLeft && d.asLeft.points.length === 0) p.push('as-left results are empty');
  if (!d.draft && !d.signatures.some((s) => s.role === 'approved')) p.push('no approval signature (mark it a draft to preview)');
  for (const s of d.signatures) if (Number.isNaN(new Date(s.signedAt).getTime())) p.push(`signature of ${s.name} has no valid date-time`);
  return p;
}

/** Output mode in words. */
export const OUTPUT_MODE_TEXT: Readonly<Record<OutputMode, string>> = {
  linear: 'Linear: 4–20 mA proportional to DP',
  'sqrt-transmitter': 'Square root extracted in the transmitter: 4–20 mA proportional to flow',
  'sqrt-host': 'Linear in DP; square root extracted in the host system',
};

/** The decision rule, stated as ISO/IEC 17025:2017 §7.8.6.1 asks (sources as named in the text). */
export function decisionRuleStatement(rule: DecisionRule): string {
  switch (rule) {
    case 'simple':
      return 'Simple acceptance (ILAC-G8:09/2019, guard band w = 0): a point passes when its error lies within the tolerance. The expanded uncertainty is reported but not used to narrow the limits, so a result close to a limit carries a risk of false acceptance of up to 50 %.';
    case 'guard-band':
      return 'Binary statement with guard band w = U (ILAC-G8:09/2019): a point passes when its error lies within the tolerance reduced by its expanded uncertainty U (k = 2), which keeps the specific risk of false acceptance below 2.5 % at the acceptance limit; otherwise it fails.';
    case 'non-binary':
      return 'Non-binary statement with guard band w = U (ILAC-G8:09/2019): pass when the error lies within the tolerance reduced by U; conditional pass when it lies within the tolerance but within U of a limit; conditional fail when it lies outside the tolerance by less than U; fail beyond that.';
    case 'managed-guard-band':
      return 'Managed guard band (ANSI/NCSL Z540.3 Handbook, method 6): acceptance limit A = T − U·M with M = 1.04 − exp(0.38·ln(TUR) − 0.54), M not below 0, so no guard band is applied where TUR ≥ 4.6; a point passes within A and fails outside it.';
  }
}

const DECISION_WORDS: Readonly<Record<Decision, string>> = {
  pass: 'pass',
  'conditional-pass': 'conditional pass',
  'conditional-fail': 'conditional fail',
  undecided: 'undecided',
  fail: 'fail',
};

/** A decision in words (`conditional pass`). */
export function decisionText(d: Decision): string {
  return DECISION_WORDS[d];
}

function pct(n: number): string {
  return `${formatFixed(n, 2)} %`;
}

/** `at 2 of 10 test points` / `at all 10 test points` / `at the 1 test point`. */
function countText(k: number, n: number): string {
  if (k === n) return n === 1 ? 'at the single test point' : `at all ${n} test points`;
  return `at ${k} of ${n} test points`;
}

/** Statement for one set of results, past tense for as-found, present for as-left. */
function statementFor(label: 'As found' | 'As left', r: CertificateResults, tol: number, spanWord: string): string {
  const n = r.points.length;
  const count = (d: Decision) => r.points.filter((p) => p.decision === d).length;
  const past = label === 'As found';
  const conforms = past ? 'conformed' : 'conforms';
  const notConforms = past ? 'did not conform' : 'does not conform';
  const lay = past ? 'lay' : 'lies';
  const spec = `its specified tolerance of ±${pct(tol)} of ${spanWord}`;
  switch (r.overallDecision) {
    case 'pass':
      return `${label}, the instrument ${conforms} to ${spec} ${countText(n, n)}.`;
    case 'conditional-pass': {
      const k = count('conditional-pass');
      return `${label}, the instrument ${conforms} to ${spec} ${countText(n, n)}; ${countText(k, n)} the error ${lay} within the tolerance but closer to a limit than its expanded uncertainty (conditional pass).`;
    }
    case 'undecided': {
      const k = count('undecided');
      return `${label}, no statement of conformity to ${spec} can be made: the decision rule could not decide ${countText(k, n)} (see the reason beside each point).`;
    }
    case 'conditional-fail':
    case 'fail': {
      const parts = (['fail', 'undecided', 'conditional-fail', 'conditional-pass'] as const)
        .map((d) => [d, count(d)] as const)
        .filter(([, k]) => k > 0)
        .map(([d, k]) => `${decisionText(d)} at ${k}`);
      const list = parts.length > 1 ? `${parts.slice(0, -1).join(', ')} and ${parts.at(-1)}` : parts[0];
      const passed = count('pass');
      return `${label}, the instrument ${notConforms} to ${spec}: ${list} of the ${n} test points${passed > 0 ? `, pass at the other ${passed}` : ''}.`;
    }
  }
}

/**
 * Statement of conformity (ISO/IEC 17025:2017 §7.8.6.2): which results it covers, which
 * specification, and the outcome under the decision rule stated beside it. One sentence per
 * result set; when no adjustment was made, the as-found results are also the as-left ones.
 */
export function conformityStatement(d: CertificateData): string[] {
  const spanWord = d.instrument.outputMode === 'sqrt-transmitter' ? 'flow span' : 'output span';
  const tol = d.instrument.tolerancePctSpan;
  const out = [statementFor('As found', d.asFound, tol, spanWord)];
  if (d.asLeft) out.push(statementFor('As left', d.asLeft, tol, spanWord));
  else out.push('No adjustment was made; the as-found results are also the as-left results.');
  return out;
}
