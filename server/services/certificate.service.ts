import type { TrimKind } from '../../shared/calc';
import type { Db } from '../db/client';
import { reviewRepository, type RunWithPoints } from '../db/repositories/review.repository';
import { siteRepository } from '../db/repositories/user.repository';
import { CertificateDataError, type CertificateData, type CertificateResults, type CertificateTrim } from '../certificates/certificate-data';
import { renderCertificate } from '../certificates/certificate-pdf';
import { conflict } from '../errors';
import type { JobService } from './job.service';
import type { RegisterService } from './register.service';
import { isoDate } from './dates';

interface PlanPointLike {
  nominalPct: number;
  basis: 'dp' | 'flow';
  approach: 'up' | 'down';
  dpPct?: number;
  expectedMa?: number;
}
interface FrozenPlanLike {
  holdSeconds: number;
  decisionRule: CertificateData['decisionRule'];
  trim: TrimKind | null;
  points: PlanPointLike[];
}

function resultsOf(run: RunWithPoints | undefined): CertificateResults | undefined {
  const r = run?.results;
  if (!r) return undefined;
  return { points: r.points, hysteresis: r.hysteresis, maxHysteresisPctSpan: r.maxHysteresisPctSpan, overallDecision: r.overallDecision };
}

/** Trim adjustments from completed trim runs: target and the reading after the trim, before from the as-found pass at the same DP. */
function trimsOf(runs: RunWithPoints[], asFound: RunWithPoints | undefined): CertificateTrim[] {
  const out: CertificateTrim[] = [];
  const foundPts = asFound ? (asFound.plan as FrozenPlanLike).points : [];
  for (const run of runs.filter((r) => r.kind === 'trim' && r.status === 'complete')) {
    const plan = run.plan as FrozenPlanLike;
    for (const p of run.points) {
      const planned = plan.points[p.index];
      const cap = p.capture as { appliedDp?: number; measuredMa?: number } | null;
      if (!planned || !cap || cap.measuredMa === undefined) continue;
      const dpPct = planned.dpPct ?? planned.nominalPct;
      const kind: TrimKind = plan.trim ?? (dpPct === 0 ? 'zero-trim' : dpPct >= 100 ? 'span-trim' : 'lower-trim');
      const k = foundPts.findIndex((f) => Math.abs((f.dpPct ?? f.nominalPct) - dpPct) < 1e-6 && f.approach === 'up');
      const before = k >= 0 ? (asFound!.points.find((x) => x.index === k)?.capture as { measuredMa?: number } | null)?.measuredMa : undefined;
      out.push({ kind, appliedDp: cap.appliedDp, targetMa: planned.expectedMa ?? 0, beforeMa: before ?? cap.measuredMa, afterMa: cap.measuredMa });
    }
  }
  return out;
}

/** Builds the certificate of a job from its record and renders the PDF (a draft until approved). */
export function createCertificateService(db: Db, deps: { jobs: JobService; registers: RegisterService }) {
  const repo = reviewRepository(db);
  const sites = siteRepository(db);

  const service = {
    async data(jobId: string): Promise<CertificateData> {
      const job = await deps.jobs.detail(jobId);
      const [instrument, runs, sigs, revs, site] = await Promise.all([
        deps.registers.getInstrument(job.instrumentId),
        repo.runsWithPoints(jobId),
        repo.signatures(jobId),
        repo.revisions(jobId),
        sites.get(),
      ]);
      const done = (kind: string) => runs.filter((r) => r.kind === kind && r.status === 'complete').at(-1);
      const asFound = done('as-found');
      const asLeft = done('as-left');
      const plan = (asFound?.plan ?? asLeft?.plan) as FrozenPlanLike | undefined;
      const current = sigs.filter((s) => s.revision === job.revision);
      const approval = current.filter((s) => s.decision === 'approve').at(-1);
      const performedEnd = (asLeft ?? asFound)?.endedAt ?? undefined;
      const siteName = site?.name ?? 'Stillpoint';
      const assignee = job.assigneeName ?? 'Technician';
      const returned = job.checklist.returnedToService;
      return {
        certificateNumber: `${instrument.tag}-${job.id.slice(0, 8).toUpperCase()}`,
        issueDate: isoDate(approval?.signedAt ?? new Date()),
        revision: job.revision,
        revisionReason: job.revision > 1 ? (revs.find((r) => r.revision === job.revision - 1)?.reason ?? 'Corrected record') : undefined,
        draft: job.status !== 'approved',
        laboratory: { name: `${siteName} — Instrument Workshop`, address: [site?.domain ?? ''] },
        placeOfWork: instrument.location || 'On site',
        customer: { name: siteName, address: [instrument.location || ''] },
        instrument: {
          tag: instrument.tag,
          service: instrument.service || undefined,
          location: instrument.location || undefined,
          range: { lrv: instrument.lrv, urv: instrument.urv, unit: instrument.unit },
          outputMode: instrument.outputMode,
          cutoff: { mode: instrument.cutoffMode, value: instrument.cutoffValue },
          tolerancePctSpan: instrument.tolerancePct,
        },
        method: {
          procedure: 'Stillpoint hands-free capture: standard plan, up then down',
          basis: plan?.points[0]?.basis ?? 'dp',
          pointsUp: (plan?.points ?? []).filter((p) => p.approach === 'up').map((p) => p.nominalPct),
          pointsDown: (plan?.points ?? []).filter((p) => p.approach === 'down').map((p) => p.nominalPct),
          holdSeconds: plan?.holdSeconds ?? 30,
        },
        performed: { start: (asFound ?? asLeft)?.startedAt.toISOString() ?? job.createdAt, end: performedEnd?.toISOString() },
        standards: job.standards.map((s) => ({
          role: s.kind === 'pressure' ? 'Applied DP' : 'Loop current',
          description: s.description,
          serial: s.serial,
          certificateNumber: s.certificateNo,
          dueDate: s.dueOn,
        })),
        decisionRule: plan?.decisionRule ?? 'guard-band',
        asFound: resultsOf(asFound) ?? { points: [], hysteresis: [], maxHysteresisPctSpan: null, overallDecision: 'fail' },
        asLeft: resultsOf(asLeft),
        trims: trimsOf(runs, asFound),
        remarks: job.notes ? [job.notes] : undefined,
        signatures: [
          ...(returned || performedEnd ? [{ role: 'performed' as const, name: returned?.byName ?? assignee, meaning: 'Calibration performed', signedAt: returned?.at ?? performedEnd!.toISOString() }] : []),
          ...(approval ? [{ role: 'approved' as const, name: approval.signerName, meaning: approval.meaning, signedAt: approval.signedAt.toISOString() }] : []),
        ],
      };
    },

    /** The certificate PDF; 409 when the record cannot make one yet (no as-found results, no standards). */
    async pdf(jobId: string): Promise<{ pdf: Buffer; fileName: string; draft: boolean }> {
      const data = await service.data(jobId);
      try {
        const pdf = await renderCertificate(data);
        return { pdf, fileName: `${data.certificateNumber}-r${data.revision}${data.draft ? '-draft' : ''}.pdf`, draft: !!data.draft };
      } catch (e) {
        if (e instanceof CertificateDataError) throw conflict(`No certificate yet: ${e.problems.join('; ')}`);
        throw e;
      }
    },
  };
  return service;
}
export type CertificateService = ReturnType<typeof createCertificateService>;
