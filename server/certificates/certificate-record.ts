/**
 * The certificate's data from a frozen record (shared/schemas/records `FrozenRecord`) and the
 * signatures of its revision — nothing else, so a signed revision's certificate never moves when
 * the register, the standards or the site's settings change. Pure: no I/O, no clock.
 */
import type { DecisionRule, TrimKind } from '../../shared/calc';
import { DEFAULT_TIME_ZONE, formatDate, formatDateTime, formatFixed, formatNominal, isTimeZone } from '../../shared/format';
import type { FrozenRecord, FrozenRun } from '../../shared/schemas/records';
import type { CertificateData, CertificateResults, CertificateSignature, CertificateTrim } from './certificate-data';

/** A signature of the revision as the certificate needs it. */
export interface RecordSignature {
  decision: 'approve' | 'return';
  signerName: string;
  meaning: string;
  /** ISO date-time. */
  signedAt: string;
}

export interface CertificateContext {
  /** Signatures of this revision, oldest first. */
  signatures: RecordSignature[];
  /** Whether this revision is approved (else the certificate is a draft). */
  approved: boolean;
  /** Why this revision replaced the previous one (revision > 1). */
  revisionReason?: string;
  /** Issue date of a draft (no approval yet), `YYYY-MM-DD`. */
  draftDate: string;
}

interface PlanPointLike {
  index: number;
  nominalPct: number;
  basis: 'dp' | 'flow';
  approach: 'up' | 'down';
  dpPct?: number;
  targetDp?: number;
  expectedMa?: number;
}
interface PlanLike {
  holdSeconds?: number;
  decisionRule?: DecisionRule;
  trim?: TrimKind | null;
  points?: PlanPointLike[];
}
interface CaptureLike {
  appliedDp?: number;
  measuredMa?: number;
  leakRatePctSpanPerMin?: number | null;
  manualReason?: string | null;
  capturedBy?: string | null;
}
interface ResultPointLike {
  errorPctSpan?: number;
}

const TRIM_NAMES: Readonly<Record<string, string>> = { 'zero-trim': 'Zero trim', 'lower-trim': 'Lower trim', 'span-trim': 'Span trim' };
const KIND_NAMES: Readonly<Record<string, string>> = { 'mode-check': 'Output-mode check', 'as-found': 'As-found', 'as-left': 'As-left' };

/** The site's zone stored with the record (UTC for records frozen before it was a setting). */
function zoneOf(record: FrozenRecord): string {
  const z = (record.site.settings as { timeZone?: unknown } | undefined)?.timeZone;
  return typeof z === 'string' && isTimeZone(z) ? z : DEFAULT_TIME_ZONE;
}

function fixed(n: number, d: number): string {
  return formatFixed(n, d);
}

function planOf(run: FrozenRun): PlanLike {
  return (run.plan ?? {}) as PlanLike;
}

function complete(runs: readonly FrozenRun[], kind: string): FrozenRun[] {
  return runs.filter((r) => r.kind === kind && r.status === 'complete').sort((a, b) => a.startedAt.localeCompare(b.startedAt));
}

function resultsOf(run: FrozenRun | undefined): CertificateResults | undefined {
  const r = run?.results as Partial<CertificateResults> | null | undefined;
  if (!r || !Array.isArray(r.points)) return undefined;
  return { points: r.points, hysteresis: r.hysteresis ?? [], maxHysteresisPctSpan: r.maxHysteresisPctSpan ?? null, overallDecision: r.overallDecision ?? 'fail' };
}

/** The evaluated result of a run's point: results are computed over the captured points, in plan order. */
function resultAt(run: FrozenRun, index: number): ResultPointLike | undefined {
  const r = run.results as { points?: ResultPointLike[] } | null;
  if (!r?.points) return undefined;
  const k = run.points.filter((p) => p.capture && p.index < index).length;
  return r.points[k];
}

/**
 * The trims, one row per kind in the order first performed: "before" is the reading of the first
 * trim run of that kind, "after" the reading of the last (absent when it was read once), each
 * with its error as evaluated for its run — the same pairing as the job page.
 */
export function trimsFromRuns(runs: readonly FrozenRun[]): CertificateTrim[] {
  const byKind = new Map<string, Array<{ run: FrozenRun; index: number; capture: CaptureLike; planned: PlanPointLike | undefined }>>();
  for (const run of complete(runs, 'trim')) {
    const plan = planOf(run);
    const kind = run.trim ?? plan.trim ?? null;
    if (!kind) continue;
    for (const p of [...run.points].sort((a, b) => a.index - b.index)) {
      const capture = p.capture as CaptureLike | null;
      if (!capture || capture.measuredMa === undefined) continue;
      const list = byKind.get(kind) ?? [];
      list.push({ run, index: p.index, capture, planned: plan.points?.[p.index] });
      byKind.set(kind, list);
    }
  }
  const out: CertificateTrim[] = [];
  for (const [kind, list] of byKind) {
    const first = list[0]!;
    const last = list.length > 1 ? list.at(-1)! : undefined;
    const planned = first.planned;
    out.push({
      kind: kind as TrimKind,
      ...(planned?.targetDp !== undefined ? { appliedDp: planned.targetDp } : {}),
      targetMa: planned?.expectedMa ?? 0,
      beforeMa: first.capture.measuredMa!,
      beforeErrorPctSpan: resultAt(first.run, first.index)?.errorPctSpan ?? null,
      ...(last ? { afterMa: last.capture.measuredMa!, afterErrorPctSpan: resultAt(last.run, last.index)?.errorPctSpan ?? null } : {}),
    });
  }
  return out;
}

/** The runs the certificate reports, each with the words that name it. */
function shownRuns(runs: readonly FrozenRun[]): Array<{ run: FrozenRun; label: string }> {
  const out: Array<{ run: FrozenRun; label: string }> = [];
  const mode = complete(runs, 'mode-check').at(-1);
  if (mode) out.push({ run: mode, label: KIND_NAMES['mode-check']! });
  const found = complete(runs, 'as-found').at(-1);
  if (found) out.push({ run: found, label: KIND_NAMES['as-found']! });
  const trims = complete(runs, 'trim');
  for (const kind of [...new Set(trims.map((r) => r.trim ?? planOf(r).trim ?? 'trim'))]) {
    const mine = trims.filter((r) => (r.trim ?? planOf(r).trim ?? 'trim') === kind);
    const name = TRIM_NAMES[kind] ?? 'Trim';
    mine.forEach((run, i) => out.push({ run, label: mine.length === 1 ? name : `${name} (reading ${i + 1} of ${mine.length}, ${i === 0 ? 'before' : i === mine.length - 1 ? 'after' : 'during'} the trim)` }));
  }
  const left = complete(runs, 'as-left').at(-1);
  if (left) out.push({ run: left, label: KIND_NAMES['as-left']! });
  return out;
}

function pointWords(run: FrozenRun, index: number): string {
  const p = planOf(run).points?.[index];
  if (!p) return `point ${index + 1}`;
  return `point ${index + 1} (${formatNominal(p.nominalPct)} % ${p.basis === 'flow' ? 'flow' : 'DP'}, ${p.approach})`;
}

function quoted(s: string): string {
  return `“${s}”`;
}

/**
 * How each point was captured, and every flag and redo, in words: manual captures go to the
 * method (they depart from hands-free capture), flags and redos to the remarks.
 */
export function captureStatements(runs: readonly FrozenRun[], names: ReadonlyMap<string, string> = new Map(), zone: string = DEFAULT_TIME_ZONE): { handsFree: number; manual: string[]; remarks: string[] } {
  const utc = (iso: string) => formatDateTime(iso, zone, { withZone: true });
  let handsFree = 0;
  const manual: string[] = [];
  const remarks: string[] = [];
  const who = (by: string | null | undefined, fallback: string | null = null) => {
    const name = by ? (names.get(by) ?? by) : fallback;
    return name ?? 'an unrecorded user';
  };
  for (const { run, label } of shownRuns(runs)) {
    for (const p of [...run.points].sort((a, b) => a.index - b.index)) {
      const c = p.capture as CaptureLike | null;
      const flags = Array.isArray(p.flags) ? (p.flags as string[]) : [];
      const what = `${label} ${pointWords(run, p.index)}`;
      if (c) {
        const isManual = flags.includes('manual') || !!c.manualReason;
        if (isManual) {
          const ev = run.events.filter((e) => e.kind === 'captured-manually' && e.index === p.index).at(-1);
          const reason = c.manualReason ?? ev?.reason ?? p.reason;
          manual.push(`${what} was captured manually by ${who(ev?.byName ?? c.capturedBy, null)}${ev ? ` at ${utc(ev.at)}` : ''}, not hands-free after the hold; reason given: ${reason ? quoted(reason) : 'none recorded'}.`);
        } else handsFree++;
      }
      if (flags.includes('leak')) {
        const rate = c?.leakRatePctSpanPerMin;
        remarks.push(
          `${what}: leak flagged — the applied DP drifted with the source isolated${rate !== null && rate !== undefined && Number.isFinite(rate) ? `; rate over the captured hold ${fixed(rate, 3)} % of span per minute` : ''}.`,
        );
      }
      if (flags.includes('overshoot')) remarks.push(`${what}: overshoot on the approach; the point was approached again from ${planOf(run).points?.[p.index]?.approach === 'down' ? 'above' : 'below'}.`);
      if (flags.includes('unstable')) remarks.push(`${what}: unstable — the readings did not settle within the expected time.`);
    }
    for (const e of run.events.filter((x) => x.kind === 'redone')) {
      const before = e.before?.capture as CaptureLike | null | undefined;
      const setAside = before?.measuredMa !== undefined ? ` The reading set aside was ${fixed(before.measuredMa, 4)} mA` : ' No reading was set aside';
      const flagText = e.before?.flags.length ? ` (flags: ${e.before.flags.join(', ')})` : '';
      remarks.push(
        `${label} ${pointWords(run, e.index)} was measured again (redo) by ${who(e.byName)} at ${utc(e.at)}; reason: ${e.reason ? quoted(e.reason) : 'none given'}.${setAside}${flagText}.`,
      );
    }
  }
  return { handsFree, manual, remarks };
}

/** The ambient conditions and condition on receipt recorded on the job's checklist, if any. */
function conditionsOf(checklist: unknown): { temperatureC: number | null; humidityPctRh: number | null; onReceipt: string | null } | undefined {
  const c = (checklist as { conditions?: { temperatureC?: unknown; humidityPctRh?: unknown; onReceipt?: unknown } } | null)?.conditions;
  if (!c) return undefined;
  const n = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : null);
  return { temperatureC: n(c.temperatureC), humidityPctRh: n(c.humidityPctRh), onReceipt: typeof c.onReceipt === 'string' && c.onReceipt ? c.onReceipt : null };
}

/** Everything the certificate shows, from the frozen record and the signatures of its revision. */
export function certificateFromRecord(record: FrozenRecord, ctx: CertificateContext): CertificateData {
  const { instrument: ins, job } = record;
  const zone = zoneOf(record);
  const found = complete(record.runs, 'as-found').at(-1);
  const left = complete(record.runs, 'as-left').at(-1);
  const plan = planOf(found ?? left ?? ({ plan: {} } as FrozenRun));
  const approval = ctx.approved ? ctx.signatures.filter((s) => s.decision === 'approve').at(-1) : undefined;
  const performedEnd = (left ?? found)?.endedAt ?? undefined;
  const returned = (job.checklist as { returnedToService?: { byName?: string; at?: string } | null } | null)?.returnedToService ?? null;
  const conditions = conditionsOf(job.checklist);
  const assignee = job.assigneeName ?? 'Technician';
  const names = new Map(record.performers.map((p) => [p.id, p.name]));
  const captures = captureStatements(record.runs, names, zone);
  const points = plan.points ?? [];
  const signatures: CertificateSignature[] = [
    ...(returned?.at || performedEnd
      ? [{ role: 'performed' as const, name: returned?.byName ?? assignee, meaning: 'Calibration performed', signedAt: returned?.at ?? performedEnd! }]
      : []),
    ...(approval ? [{ role: 'approved' as const, name: approval.signerName, meaning: approval.meaning, signedAt: approval.signedAt }] : []),
  ];
  return {
    certificateNumber: `${ins.tag}-${job.id.slice(0, 8).toUpperCase()}`,
    issueDate: approval ? formatDate(approval.signedAt, zone) : ctx.draftDate,
    timeZone: zone,
    ...(approval ? { issuedAt: approval.signedAt } : {}),
    revision: job.revision,
    revisionReason: job.revision > 1 ? (ctx.revisionReason ?? 'Corrected record') : undefined,
    draft: !approval,
    laboratory: { name: `${record.site.name} — Instrument Workshop`, address: [record.site.domain] },
    placeOfWork: ins.location || 'On site',
    customer: { name: record.site.name, address: [ins.location || ''] },
    instrument: {
      tag: ins.tag,
      service: ins.service || undefined,
      location: ins.location || undefined,
      range: { lrv: ins.lrv, urv: ins.urv, unit: ins.unit },
      outputMode: ins.outputMode,
      cutoff: { mode: ins.cutoffMode, value: ins.cutoffValue },
      tolerancePctSpan: ins.tolerancePct,
      ...(conditions?.onReceipt ? { condition: conditions.onReceipt } : {}),
    },
    ...(conditions && (conditions.temperatureC !== null || conditions.humidityPctRh !== null)
      ? {
          environment: {
            ...(conditions.temperatureC !== null ? { temperatureC: conditions.temperatureC } : {}),
            ...(conditions.humidityPctRh !== null ? { humidityPctRh: conditions.humidityPctRh } : {}),
          },
        }
      : {}),
    method: {
      procedure: 'Stillpoint hands-free capture: standard plan, up then down',
      basis: points[0]?.basis ?? 'dp',
      pointsUp: points.filter((p) => p.approach === 'up').map((p) => p.nominalPct),
      pointsDown: points.filter((p) => p.approach === 'down').map((p) => p.nominalPct),
      holdSeconds: plan.holdSeconds ?? 30,
      captures: { handsFree: captures.handsFree, manual: captures.manual },
    },
    performed: { start: (found ?? left)?.startedAt ?? job.createdAt, ...(performedEnd ? { end: performedEnd } : {}) },
    standards: record.standards.map((s) => ({
      role: s.kind === 'pressure' ? 'Applied DP' : 'Loop current',
      description: s.description,
      serial: s.serial,
      certificateNumber: s.certificateNo,
      ...(s.calibratingLab ? { calibratedBy: s.calibratingLab } : {}),
      dueDate: s.dueOn,
    })),
    decisionRule: plan.decisionRule ?? 'guard-band',
    asFound: resultsOf(found) ?? { points: [], hysteresis: [], maxHysteresisPctSpan: null, overallDecision: 'fail' },
    asLeft: resultsOf(left),
    trims: trimsFromRuns(record.runs),
    ...(record.hart ? { hart: record.hart } : {}),
    remarks: [
      ...(job.notes ? [job.notes] : []),
      ...(captures.remarks.length ? captures.remarks : ['No point carried a leak, overshoot or instability flag, and no point was measured again.']),
    ],
    signatures,
  };
}
