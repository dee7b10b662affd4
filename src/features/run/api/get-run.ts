import { useQueries, useQuery } from '@tanstack/react-query';
import type { Run } from '../../../../shared/schemas/runs';
import { runQueryOptions } from '../../../lib/run-query';

export { runQueryOptions } from '../../../lib/run-query';

/** The run on the capture screen: the stream keeps it current; the slow poll only covers a stream that is down. */
export function useRun(id: string) {
  return useQuery({ ...runQueryOptions(id), refetchInterval: 15_000 });
}

/** Several runs at once (the job page shows every run of the job). */
export function useRuns(ids: readonly string[]): Run[] {
  const results = useQueries({ queries: ids.map((id) => runQueryOptions(id)) });
  return results.flatMap((r) => (r.data ? [r.data] : []));
}
