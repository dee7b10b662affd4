/**
 * Every TanStack Query key of the page, in one factory: features build their query options on
 * these, so that invalidation across features and `lib/live-stream.ts` reach the same caches
 * without importing features (a prefix such as `jobs` invalidates every key under it).
 */
export const queryKeys = {
  /** The session check. */
  auth: ['auth'] as const,
  me: ['auth', 'me'] as const,
  jobs: ['jobs'] as const,
  job: (id: string) => ['jobs', id] as const,
  queue: (withinDays: number) => ['jobs', 'queue', withinDays] as const,
  runs: ['runs'] as const,
  run: (id: string) => ['runs', id] as const,
  /** A run's trace for the review chart, in a window (ms, widened to whole milliseconds) or whole. */
  reviewTrace: (runId: string, w: { from: number; to: number } | null | undefined) => ['runs', runId, 'review-trace', w ? Math.floor(w.from) : null, w ? Math.ceil(w.to) : null] as const,
  bench: ['bench'] as const,
  /** Everything of one register (`instruments`, `standards`): its lists and its rows. */
  register: (plural: 'instruments' | 'standards') => [plural] as const,
  /** A page of a register: search, sort and page as the server is asked for them. */
  registerList: (plural: 'instruments' | 'standards', params: Record<string, string | number>) => [plural, 'list', params] as const,
  instruments: ['instruments'] as const,
  instrument: (id: string) => ['instruments', id] as const,
  standards: ['standards'] as const,
  records: ['records'] as const,
  recordList: (status: string, from: string | undefined, to: string | undefined) => ['records', status, from, to] as const,
  audit: (entity: string | undefined, entityId: string | undefined) => ['audit', entity ?? '', entityId ?? ''] as const,
  outbox: ['outbox'] as const,
  outboxMessage: (id: string) => ['outbox', id] as const,
  users: ['users'] as const,
};
