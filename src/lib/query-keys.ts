/**
 * Query keys that the live stream updates or invalidates. Features build their query options on
 * these so that `lib/live-stream.ts` can reach their caches without importing features.
 */
export const queryKeys = {
  /** The session check (features/auth `meQueryKey` starts with it). */
  auth: ['auth'] as const,
  jobs: ['jobs'] as const,
  job: (id: string) => ['jobs', id] as const,
  runs: ['runs'] as const,
  run: (id: string) => ['runs', id] as const,
  bench: ['bench'] as const,
  instrument: (id: string) => ['instruments', id] as const,
};
