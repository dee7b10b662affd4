import { useQueries } from '@tanstack/react-query';
import { runQueryOptions } from '../../../lib/run-query';

/** The job's runs for review: the one run query (lib/run-query.ts); completed runs do not change, so no polling. */
export function useReviewRuns(ids: readonly string[]) {
  return useQueries({ queries: ids.map((id) => runQueryOptions(id)) });
}
