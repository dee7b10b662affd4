import { afterEach, describe, expect, it, vi } from 'vitest';
import { z } from 'zod';
import { api, ApiError, apiRequest, isApiError } from './api-client';

function reply(status: number, body?: unknown, raw?: string) {
  const text = raw ?? (body === undefined ? null : JSON.stringify(body));
  return vi.fn(async () => new Response(text, { status, statusText: status === 502 ? 'Bad Gateway' : '' }));
}

async function caught(p: Promise<unknown>): Promise<ApiError> {
  try {
    await p;
  } catch (e) {
    if (e instanceof ApiError) return e;
    throw e;
  }
  throw new Error('expected the request to fail');
}

afterEach(() => vi.unstubAllGlobals());

describe('apiRequest', () => {
  it('parses the error body into ApiError with status, code, message and fields', async () => {
    vi.stubGlobal(
      'fetch',
      reply(400, { error: { code: 'validation_failed', message: 'Check the form', fields: { email: ['Enter a valid email address'], 'accuracy.floor': ['Too small'] } } }),
    );
    const e = await caught(api.post('/api/users', { email: 'x' }));
    expect(isApiError(e)).toBe(true);
    expect(e.status).toBe(400);
    expect(e.code).toBe('validation_failed');
    expect(e.message).toBe('Check the form');
    expect(e.fields).toEqual({ email: ['Enter a valid email address'], 'accuracy.floor': ['Too small'] });
    expect(e.fieldMessage('email')).toBe('Enter a valid email address');
    expect(e.fieldMessage('accuracy.floor')).toBe('Too small');
    expect(e.fieldMessage('name')).toBeUndefined();
  });

  it('keeps 401 and 429 codes and messages from the server', async () => {
    vi.stubGlobal('fetch', reply(401, { error: { code: 'unauthenticated', message: 'Email or password is not right' } }));
    const e401 = await caught(api.get('/api/auth/me'));
    expect([e401.status, e401.code, e401.message]).toEqual([401, 'unauthenticated', 'Email or password is not right']);
    expect(e401.fields).toBeUndefined();

    vi.stubGlobal('fetch', reply(429, { error: { code: 'rate_limited', message: 'Slow down' } }));
    const e429 = await caught(api.post('/api/auth/login', {}));
    expect([e429.status, e429.code]).toEqual([429, 'rate_limited']);
  });

  it('falls back to a code from the status when the body is not our error shape', async () => {
    vi.stubGlobal('fetch', reply(502, undefined, '<html>proxy error</html>'));
    const e = await caught(api.get('/api/jobs'));
    expect(e.status).toBe(502);
    expect(e.code).toBe('internal');
    expect(e.message).toContain('502');

    vi.stubGlobal('fetch', reply(403, { error: { code: 'not-a-code', message: 'x' } }));
    const f = await caught(api.get('/api/users'));
    expect(f.code).toBe('forbidden');
  });

  it('turns a failed fetch into a network ApiError with status 0', async () => {
    vi.stubGlobal(
      'fetch',
      vi.fn(async () => {
        throw new TypeError('Failed to fetch');
      }),
    );
    const e = await caught(api.get('/api/health'));
    expect(e.status).toBe(0);
    expect(e.code).toBe('network');
  });

  it('sends JSON with same-origin credentials and returns undefined for 204', async () => {
    const f = reply(204);
    vi.stubGlobal('fetch', f);
    const out = await api.post('/api/auth/logout', { a: 1 });
    expect(out).toBeUndefined();
    const [path, init] = f.mock.calls[0] as unknown as [string, RequestInit];
    expect(path).toBe('/api/auth/logout');
    expect(init.method).toBe('POST');
    expect(init.credentials).toBe('same-origin');
    expect((init.headers as Record<string, string>)['Content-Type']).toBe('application/json');
    expect(init.body).toBe('{"a":1}');
  });

  it('checks a reply against the schema and reports a contract mismatch', async () => {
    const Schema = z.object({ ok: z.boolean() });
    vi.stubGlobal('fetch', reply(200, { ok: true }));
    await expect(apiRequest('/api/health', { schema: Schema })).resolves.toEqual({ ok: true });

    vi.stubGlobal('fetch', reply(200, { ok: 'yes' }));
    const e = await caught(apiRequest('/api/health', { schema: Schema }));
    expect(e.code).toBe('bad_response');
    expect(e.status).toBe(200);
  });
});
