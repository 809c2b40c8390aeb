import { api, ApiError, describeError } from '@/components/queries/api';
import { createQueryClient } from '@/components/queries/client';
import { mockFetch } from './support/render';

describe('api()', () => {
  test('turns the error shape into an ApiError with status, code, message and fields', async () => {
    mockFetch({
      'POST /api/users': {
        status: 400,
        body: { error: { code: 'bad_request', message: 'Check the highlighted fields.', fields: { email: ['Enter an e-mail address'] } } },
      },
    });
    const err = (await api('/api/users', { method: 'POST', body: {} }).catch((e) => e)) as ApiError;
    expect(err).toBeInstanceOf(ApiError);
    expect(err).toMatchObject({ status: 400, code: 'bad_request', message: 'Check the highlighted fields.' });
    expect(err.fieldErrors()).toEqual({ email: 'Enter an e-mail address' });
  });

  test('a body that is not the error shape still gives a code from the status', async () => {
    mockFetch({ 'GET /api/users': { status: 503, body: { nope: true } } });
    const err = (await api('/api/users').catch((e) => e)) as ApiError;
    expect(err).toMatchObject({ status: 503, code: 'internal' });
    expect(describeError(err)).toMatch(/went wrong on the server/);
  });

  test('a network failure reads as a sentence, not a stack', async () => {
    (global as unknown as { fetch: unknown }).fetch = jest.fn(() => Promise.reject(new TypeError('Failed to fetch')));
    const err = (await api('/api/users').catch((e) => e)) as ApiError;
    expect(err.code).toBe('network');
    expect(describeError(err)).toBe('Emberlot could not reach the server. Check the network connection and try again.');
  });

  test('204 gives undefined', async () => {
    mockFetch({ 'POST /api/auth/sign-out': { status: 204 } });
    await expect(api('/api/auth/sign-out', { method: 'POST' })).resolves.toBeUndefined();
  });
});

describe('session end on 401', () => {
  const unauth = { status: 401, body: { error: { code: 'unauthenticated', message: 'Sign in first.' } } };

  test('a 401 from an ordinary query ends the session once', async () => {
    mockFetch({ 'GET /api/users': unauth });
    const onSessionEnded = jest.fn();
    const qc = createQueryClient({ onSessionEnded });
    await qc.fetchQuery({ queryKey: ['users'], queryFn: () => api('/api/users'), retry: false, gcTime: Infinity }).catch(() => {});
    await qc.fetchQuery({ queryKey: ['users2'], queryFn: () => api('/api/users'), retry: false, gcTime: Infinity }).catch(() => {});
    expect(onSessionEnded).toHaveBeenCalledTimes(1);
  });

  test('a query that expects a 401 (who am I?) does not', async () => {
    mockFetch({ 'GET /api/auth/me': unauth });
    const onSessionEnded = jest.fn();
    const qc = createQueryClient({ onSessionEnded });
    await qc
      .fetchQuery({
        queryKey: ['me'],
        queryFn: () => api('/api/auth/me'),
        meta: { expectUnauthenticated: true },
        retry: false,
        gcTime: Infinity,
      })
      .catch(() => {});
    expect(onSessionEnded).not.toHaveBeenCalled();
  });
});
