import { describe, expect, it, vi } from 'vitest';
import { ApiError } from './api-client';
import { createQueryClient, SESSION_CHECK, shouldRetry } from './query-client';

const e401 = () => new ApiError({ status: 401, code: 'unauthenticated', message: 'Sign in' });

describe('createQueryClient', () => {
  it('reports an ended session on a 401 from an ordinary query', async () => {
    const onUnauthenticated = vi.fn();
    const qc = createQueryClient({ onUnauthenticated });
    await qc.fetchQuery({ queryKey: ['jobs'], queryFn: () => Promise.reject(e401()) }).catch(() => {});
    expect(onUnauthenticated).toHaveBeenCalledTimes(1);
  });

  it('leaves the first session check to the route guards (no redirect loop on /login)', async () => {
    const onUnauthenticated = vi.fn();
    const qc = createQueryClient({ onUnauthenticated });
    const check = { queryKey: ['auth', 'me'], meta: { [SESSION_CHECK]: true }, retry: false, staleTime: 0 } as const;
    await qc.fetchQuery({ ...check, queryFn: () => Promise.reject(e401()) }).catch(() => {});
    expect(onUnauthenticated).not.toHaveBeenCalled();

    // Once it has had a user, a 401 on it means the session ended.
    qc.setQueryData(['auth', 'me'], { id: 'u1' });
    await qc.fetchQuery({ ...check, queryFn: () => Promise.reject(e401()) }).catch(() => {});
    expect(onUnauthenticated).toHaveBeenCalledTimes(1);
  });

  it('retries network and server errors, never 4xx', () => {
    expect(shouldRetry(0, e401())).toBe(false);
    expect(shouldRetry(0, new ApiError({ status: 503, code: 'internal', message: 'x' }))).toBe(true);
    expect(shouldRetry(0, new ApiError({ status: 0, code: 'network', message: 'x' }))).toBe(true);
    expect(shouldRetry(2, new ApiError({ status: 0, code: 'network', message: 'x' }))).toBe(false);
  });
});
