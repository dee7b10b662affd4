import type { Run } from '../../../../shared/schemas/runs';

/** A run's kind in words, as the capture screen heads it. */
export const RUN_KIND_LABEL: Record<Run['kind'], string> = {
  'mode-check': 'Output-mode check',
  'as-found': 'As-found',
  trim: 'Trim',
  'as-left': 'As-left',
};

/** A trim step in words. */
export const TRIM_LABEL: Record<string, string> = { 'zero-trim': 'Zero trim', 'lower-trim': 'Lower trim', 'span-trim': 'Span trim' };
