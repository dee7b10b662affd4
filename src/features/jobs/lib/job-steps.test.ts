import { describe, expect, it } from 'vitest';
import type { JobDetail } from '../../../../shared/schemas/jobs';
import type { Run } from '../../../../shared/schemas/runs';
import { jobSteps } from './job-steps';

const signed = { by: 'u', byName: 'Tech', at: '2026-01-01T00:00:00Z' };
const job = (over: Partial<JobDetail> = {}): JobDetail => ({
  id: 'j',
  instrumentId: 'i',
  tag: 'FT-101',
  status: 'in-progress',
  assigneeId: 'u',
  assigneeName: 'Tech',
  dueOn: '2026-01-01',
  overdue: false,
  permitNo: null,
  notes: '',
  revision: 1,
  createdAt: '',
  updatedAt: '',
  checklist: { standardIds: [], permitNo: null, bypass: { required: false, description: '', recorded: null, removed: null }, operatorsInformed: null, isolated: null, vented: null, flushed: null, returnedToService: null },
  standards: [],
  runs: [],
  blockers: ['Record the permit-to-work number'],
  submitBlockers: ['Complete the as-found run'],
  ...over,
});
const modeRun = (matches: boolean, finding: 'root-in-transmitter' | 'linear-output' = 'linear-output'): Run =>
  ({ id: 'm', jobId: 'j', kind: 'mode-check', trim: null, status: 'complete', unit: 'inH2O@68F', holdSeconds: 2, currentIndex: null, points: [], results: null, modeCheck: { measuredMa: 8.01, finding, matchesRegister: matches }, startedAt: '2026-01-01T00:00:00Z', endedAt: null }) as Run;

describe('jobSteps', () => {
  it('shows the server blockers verbatim on preparation and on the runs they stop', () => {
    const steps = jobSteps({ job: job(), runs: [], registerMode: 'sqrt-transmitter', trimKinds: ['lower-trim', 'span-trim'] });
    expect(steps.map((s) => s.id)).toEqual(['preparation', 'mode-check', 'as-found', 'decision', 'trim', 'as-left', 'return', 'submit']);
    expect(steps[0]).toMatchObject({ status: 'current', blockers: ['Record the permit-to-work number'] });
    expect(steps[1]!.blockers).toEqual(['Record the permit-to-work number']);
    expect(steps[7]!.blockers).toEqual(['Complete the as-found run']);
  });

  it('asks for the output-mode check before the as-found pass, and stops on a mismatch with the register', () => {
    const ready = job({ blockers: [] });
    const before = jobSteps({ job: ready, runs: [], registerMode: 'sqrt-transmitter', trimKinds: [] });
    expect(before[2]!.blockers).toEqual(['Run the output-mode check first']);
    const mismatch = jobSteps({ job: ready, runs: [modeRun(false)], registerMode: 'sqrt-transmitter', trimKinds: [] });
    expect(mismatch[1]!.status).toBe('blocked');
    expect(mismatch[2]!.blockers[0]).toMatch(/8\.01 mA at 25 % DP .*register says square root in the transmitter/);
    const ok = jobSteps({ job: ready, runs: [modeRun(true, 'root-in-transmitter')], registerMode: 'sqrt-transmitter', trimKinds: [] });
    expect(ok[1]!.status).toBe('done');
    expect(ok[2]).toMatchObject({ status: 'current', blockers: [] });
  });

  it('marks trims and as-left optional after a passing as-found, and return to service done once the bypass is removed', () => {
    const j = job({
      blockers: [],
      runs: [{ id: 'a', kind: 'as-found', status: 'complete', startedAt: '2026-01-01T01:00:00Z', endedAt: null, overallDecision: 'pass' }],
      checklist: { ...job().checklist, bypass: { required: true, description: 'LSLL trip', recorded: signed, removed: signed }, returnedToService: signed },
      submitBlockers: [],
    });
    const steps = jobSteps({ job: j, runs: [modeRun(true)], registerMode: 'sqrt-transmitter', trimKinds: ['lower-trim', 'span-trim'] });
    expect(steps.find((s) => s.id === 'trim')!.status).toBe('optional');
    expect(steps.find((s) => s.id === 'as-left')!.status).toBe('optional');
    expect(steps.find((s) => s.id === 'return')!.status).toBe('done');
    expect(steps.find((s) => s.id === 'submit')!.status).toBe('current');
  });
});
