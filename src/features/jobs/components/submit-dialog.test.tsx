import { cleanup, fireEvent, render, screen } from '@testing-library/react';
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { JobDetail } from '../../../../shared/schemas/jobs';
import { SubmitDialog, submissionSummary } from './submit-dialog';

afterEach(cleanup);

const step = (byName: string) => ({ by: 'u1', byName, at: '2026-12-02T09:00:00Z' });
const run = (id: string, kind: JobDetail['runs'][number]['kind'], overallDecision: string | null, startedAt: string, status = 'complete') => ({ id, kind, status, startedAt, endedAt: startedAt, overallDecision });

const job: JobDetail = {
  id: 'j1',
  instrumentId: 'i1',
  tag: 'FT-101',
  status: 'in-progress',
  assigneeId: 'u1',
  assigneeName: 'Ilse Varno',
  dueOn: '2026-12-10',
  overdue: false,
  permitNo: 'PTW-42',
  notes: '',
  revision: 1,
  createdAt: '2026-12-01T08:00:00Z',
  updatedAt: '2026-12-02T09:00:00Z',
  checklist: {
    standardIds: ['s1'],
    permitNo: 'PTW-42',
    bypass: { required: false, description: '', recorded: null, removed: null },
    operatorsInformed: step('Ilse Varno'),
    isolated: step('Ilse Varno'),
    vented: step('Ilse Varno'),
    flushed: null,
    returnedToService: step('Ilse Varno'),
  },
  standards: [{ id: 's1', kind: 'pressure', description: 'Bench pressure calibrator', serial: 'PC-0042', certificateNo: 'C-1', dueOn: '2027-01-01', dueState: 'in-date', problem: null }],
  runs: [
    run('r1', 'mode-check', null, '2026-12-02T08:00:00Z'),
    run('r2', 'as-found', 'fail', '2026-12-02T08:10:00Z'),
    run('r3', 'trim', null, '2026-12-02T08:30:00Z'),
    run('r4', 'trim', null, '2026-12-02T08:40:00Z'),
    run('r5', 'as-left', 'fail', '2026-12-02T08:50:00Z'),
    run('r6', 'as-left', 'pass', '2026-12-02T09:10:00Z'),
    run('r7', 'as-left', null, '2026-12-02T09:30:00Z', 'aborted'),
  ],
  blockers: [],
  submitBlockers: [],
};

describe('SubmitDialog', () => {
  it('lists what is submitted: tag, each pass with its decision, trims, standards, permit, return to service', () => {
    const rows = Object.fromEntries(submissionSummary(job).map((r) => [r.label, r.value]));
    expect(rows).toEqual({
      Instrument: 'FT-101, revision 1',
      'Output-mode check': 'complete',
      'As-found': 'Fail',
      Trims: '2 recorded',
      // The latest complete as-left run decides; an aborted one does not count.
      'As-left': 'Pass (latest of 2 runs)',
      Standards: 'Bench pressure calibrator (PC-0042)',
      'Permit to work': 'PTW-42',
      'Returned to service': 'by Ilse Varno',
    });
  });

  it('submits only on confirmation', () => {
    const onConfirm = vi.fn();
    const onClose = vi.fn();
    render(<SubmitDialog open job={job} pending={false} onClose={onClose} onConfirm={onConfirm} />);
    expect(screen.getByText('Submit FT-101 for review?')).toBeTruthy();
    expect(screen.getByTestId('submit-as-left').textContent).toBe('Pass (latest of 2 runs)');
    fireEvent.click(screen.getByRole('button', { name: 'Not yet' }));
    expect(onClose).toHaveBeenCalledTimes(1);
    expect(onConfirm).not.toHaveBeenCalled();
    fireEvent.click(screen.getByTestId('confirm-submit'));
    expect(onConfirm).toHaveBeenCalledTimes(1);
  });
});
