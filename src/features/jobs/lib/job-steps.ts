/**
 * The order of work on a job and what blocks each step. Server blockers (`blockers`,
 * `submitBlockers`) are shown verbatim; the client adds only what follows from the runs it has
 * loaded (the output-mode check must match the register before the as-found pass).
 */
import type { JobDetail } from '../../../../shared/schemas/jobs';
import type { Run, RunKind } from '../../../../shared/schemas/runs';
import { formatFixed } from '../../../lib/format';

export type StepId = 'preparation' | 'mode-check' | 'as-found' | 'decision' | 'trim' | 'as-left' | 'return' | 'submit';
export type StepStatus = 'done' | 'current' | 'blocked' | 'todo' | 'optional';

export interface JobStep {
  id: StepId;
  title: string;
  status: StepStatus;
  /** What stops this step now, in words. */
  blockers: string[];
}

type Summary = JobDetail['runs'][number];

/** Latest run of a kind (by start time), optionally only complete ones. */
export function latestRun<T extends Summary | Run>(runs: readonly T[], kind: RunKind, complete = false): T | undefined {
  return [...runs]
    .filter((r) => r.kind === kind && (!complete || r.status === 'complete'))
    .sort((a, b) => a.startedAt.localeCompare(b.startedAt))
    .at(-1);
}

export const OUTPUT_MODE_WORDS: Record<string, string> = {
  'root-in-transmitter': 'square root in the transmitter',
  'linear-output': 'an output linear in DP',
  'cannot-tell': 'neither 8 mA nor 12 mA',
  linear: 'an output linear in DP',
  'sqrt-transmitter': 'square root in the transmitter',
  'sqrt-host': 'an output linear in DP (root in the host)',
};

/** Mode-check problem in words, or null when the finding matches the register (or no check yet). */
export function modeCheckProblem(run: Run | undefined, registerMode: string | undefined): string | null {
  if (!run?.modeCheck || run.status !== 'complete') return null;
  if (run.modeCheck.matchesRegister) return null;
  const found = OUTPUT_MODE_WORDS[run.modeCheck.finding] ?? run.modeCheck.finding;
  const reg = registerMode ? (OUTPUT_MODE_WORDS[registerMode] ?? registerMode) : 'another output mode';
  return `The output-mode check read ${formatFixed(run.modeCheck.measuredMa, 2)} mA at 25 % DP (${found}), but the register says ${reg}. Stop: correct the register or the transmitter configuration, then repeat the check.`;
}

export interface StepInput {
  job: JobDetail;
  /** Full runs of the job that have loaded (any order). */
  runs: readonly Run[];
  registerMode?: string | undefined;
  /** Trim kinds the output mode needs (from shared/calc trimPlan). */
  trimKinds: readonly string[];
}

/** The eight steps with their status and blockers. */
export function jobSteps({ job, runs, registerMode, trimKinds }: StepInput): JobStep[] {
  const finished = job.status === 'submitted' || job.status === 'approved';
  const prepDone = job.blockers.length === 0 || finished;
  const modeRun = latestRun(runs, 'mode-check', true);
  const modeProblem = modeCheckProblem(modeRun, registerMode);
  const modeDone = !!modeRun && !modeProblem;
  const asFound = latestRun(job.runs, 'as-found', true);
  const asFoundPass = asFound?.overallDecision === 'pass';
  const trimRuns = runs.filter((r) => r.kind === 'trim' && r.status === 'complete');
  const trimsDone = trimKinds.every((k) => trimRuns.some((r) => r.trim === k));
  const anyTrim = trimRuns.length > 0;
  const asLeft = latestRun(job.runs, 'as-left', true);
  const c = job.checklist;
  const returnDone = !!c.returnedToService && (!c.bypass.recorded || !!c.bypass.removed);

  const prepBlockers = finished ? [] : job.blockers;
  const modeBlockers = [...prepBlockers];
  const asFoundBlockers = [...prepBlockers];
  if (modeProblem) asFoundBlockers.push(modeProblem);
  else if (!modeRun) asFoundBlockers.push('Run the output-mode check first');

  const steps: JobStep[] = [
    { id: 'preparation', title: 'Preparation', status: prepDone ? 'done' : 'current', blockers: prepBlockers },
    { id: 'mode-check', title: 'Output-mode check', status: modeProblem ? 'blocked' : modeDone ? 'done' : prepDone ? 'current' : 'todo', blockers: modeProblem ? [modeProblem] : modeBlockers },
    { id: 'as-found', title: 'As-found', status: asFound ? 'done' : modeProblem ? 'blocked' : asFoundBlockers.length ? 'todo' : 'current', blockers: asFound ? [] : asFoundBlockers },
    { id: 'decision', title: 'Decision', status: asFound ? 'done' : 'todo', blockers: asFound ? [] : ['Complete the as-found run'] },
    {
      id: 'trim',
      title: 'Trim',
      status: trimsDone && anyTrim ? 'done' : !asFound ? 'todo' : asFoundPass ? 'optional' : 'current',
      blockers: asFound ? [] : ['Complete the as-found run'],
    },
    {
      id: 'as-left',
      title: 'As-left',
      status: asLeft ? 'done' : !asFound ? 'todo' : asFoundPass && !anyTrim ? 'optional' : 'current',
      blockers: asFound ? [] : ['Complete the as-found run'],
    },
    { id: 'return', title: 'Return to service', status: returnDone ? 'done' : asFound ? 'current' : 'todo', blockers: [] },
    {
      id: 'submit',
      title: 'Submit',
      status: finished ? 'done' : job.submitBlockers.length ? 'todo' : 'current',
      blockers: finished ? [] : job.submitBlockers,
    },
  ];
  return steps;
}
