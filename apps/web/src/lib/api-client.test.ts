import { messageResponseSchema } from '@evenhand/entities';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { ApiError, apiRequest } from '@/lib/api-client';

const fetchMock = vi.fn<typeof fetch>();

function json(status: number, body: unknown): Response {
  return new Response(JSON.stringify(body), { status, headers: { 'Content-Type': 'application/json' } });
}

function sentHeaders(): Record<string, string> {
  const init = fetchMock.mock.calls[0][1];
  return init?.headers as Record<string, string>;
}

beforeEach(() => {
  vi.stubGlobal('fetch', fetchMock);
  document.cookie = 'evenhand_csrf=token-from-cookie';
});

afterEach(() => {
  fetchMock.mockReset();
  vi.unstubAllGlobals();
  document.cookie = 'evenhand_csrf=; expires=Thu, 01 Jan 1970 00:00:00 GMT';
});

describe('apiRequest', () => {
  it('sends the CSRF cookie back as the X-CSRF-Token header on a POST', async () => {
    fetchMock.mockResolvedValue(json(200, { message: 'ok' }));
    await apiRequest('/auth/password-reset', { method: 'POST', body: { email: 'a@b.org' }, schema: messageResponseSchema });
    expect(sentHeaders()['X-CSRF-Token']).toBe('token-from-cookie');
    expect(fetchMock.mock.calls[0][1]).toMatchObject({ method: 'POST', credentials: 'same-origin', body: '{"email":"a@b.org"}' });
  });

  it('sends no CSRF header on a GET', async () => {
    fetchMock.mockResolvedValue(json(200, { message: 'ok' }));
    await apiRequest('/health', { schema: messageResponseSchema });
    expect(sentHeaders()).not.toHaveProperty('X-CSRF-Token');
  });

  it('puts the query into the URL and leaves out empty values', async () => {
    fetchMock.mockResolvedValue(json(200, { message: 'ok' }));
    await apiRequest('/accounts', { query: { q: 'ada', role: undefined, limit: 25, sort: '' }, schema: messageResponseSchema });
    expect(fetchMock.mock.calls[0][0]).toBe('/api/accounts?q=ada&limit=25');
  });

  it("turns the API's error shape into an ApiError with its code, message and field issues", async () => {
    fetchMock.mockResolvedValue(
      json(400, {
        error: {
          code: 'validation_failed',
          message: 'Some request body values are not valid',
          details: { issues: [{ path: 'roles.0.siteId', message: 'A teacher grant needs a site' }] },
        },
      }),
    );
    const error = await apiRequest('/accounts', { method: 'POST', body: {} }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ApiError);
    expect(error).toMatchObject({
      status: 400,
      code: 'validation_failed',
      message: 'Some request body values are not valid',
      fieldIssues: [{ path: 'roles.0.siteId', message: 'A teacher grant needs a site' }],
    });
  });

  it('turns a 5xx answer that is not JSON into an ApiError that says the server is not answering properly', async () => {
    fetchMock.mockResolvedValue(new Response('<html>Bad Gateway</html>', { status: 502, headers: { 'Content-Type': 'text/html' } }));
    const error = await apiRequest('/auth/me').catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ApiError);
    expect(error).toMatchObject({ status: 502, code: 'unavailable', fieldIssues: [] });
    expect((error as ApiError).message).toMatch(/not answering properly/);
  });

  it('reports an unreachable server as status 0', async () => {
    fetchMock.mockRejectedValue(new TypeError('Failed to fetch'));
    const error = await apiRequest('/auth/me').catch((e: unknown) => e);
    expect(error).toMatchObject({ status: 0, code: 'unavailable' });
  });

  it('refuses an answer that does not match the expected schema', async () => {
    fetchMock.mockResolvedValue(json(200, { unexpected: true }));
    const error = await apiRequest('/auth/me', { schema: messageResponseSchema }).catch((e: unknown) => e);
    expect(error).toMatchObject({ code: 'internal' });
  });
});
