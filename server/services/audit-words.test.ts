import { describe, expect, it } from 'vitest';
import { actionWords, summaryOf } from './audit-words';
import { governingOf } from './drift.service';

describe('audit trail in words', () => {
  it('names known actions in words and never shows a slug', () => {
    expect(actionWords('job.checklist-changed')).toBe('Checklist changed');
    expect(actionWords('job.returned')).toBe('Returned with comments');
    expect(actionWords('file.removed')).toBe('File removed');
    // An action without words of its own still reads as words.
    expect(actionWords('bench.port-swapped')).toBe('Port swapped');
  });
  it('counts points from 1 as people do', () => {
    expect(summaryOf('run.point-captured', { index: 0 })).toBe('Point captured hands-free (point 1)');
    expect(summaryOf('run.point-redone', { index: 4 })).toBe('Point set for a redo (point 5)');
    expect(summaryOf('job.submitted', { index: 4 })).toBe('Submitted for review');
  });
});

describe('the interval suggestion that governs', () => {
  const rec = (method: 'staircase' | 'reliability', days: number) => ({ method, action: 'keep' as const, recommendedDays: days, basis: '' });
  it('is the shorter of the two, with the reason', () => {
    const g = governingOf([rec('staircase', 450), rec('reliability', 300)]);
    expect(g?.method).toBe('reliability');
    expect(g?.reason).toMatch(/300 days.*shorter.*450 days/);
    expect(governingOf([rec('staircase', 200), rec('reliability', 300)])?.method).toBe('staircase');
  });
  it('is the staircase on a tie, the only one when alone, and none without any', () => {
    expect(governingOf([rec('reliability', 365), rec('staircase', 365)])?.method).toBe('staircase');
    expect(governingOf([rec('reliability', 365)])?.method).toBe('reliability');
    expect(governingOf([])).toBeNull();
  });
});
