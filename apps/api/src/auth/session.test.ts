import jwt from 'jsonwebtoken';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { loadConfig } from '../config.js';
import { signSession, verifySession } from './session.js';

// A token's signature is checked once and its claims kept by its exact text (see verifySession); these show that the
// kept copy never outlives the token and is never accepted for another text or under another secret. Whether the
// session still stands is asked on every request and tested in auth.test.ts and db/change-feed.test.ts.
const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: 'postgres://unused', SMTP_PORT: '1', JWT_SECRET: 'a-secret-for-the-session-memory-tests-0001' });
const userId = '00000000-0000-4000-8000-000000000001';

afterEach(() => {
  vi.useRealTimers();
  vi.restoreAllMocks();
});

describe('the memory of verified tokens', () => {
  it('checks a token’s signature once, then answers from memory with the same claims', () => {
    const token = signSession(config, { userId, sessionVersion: 3 });
    const verify = vi.spyOn(jwt, 'verify');
    const first = verifySession(config, token);
    const second = verifySession(config, token);
    expect(first).toMatchObject({ sub: userId, sv: 3 });
    expect(second).toBe(first);
    expect(verify).toHaveBeenCalledTimes(1);
  });

  it('when a kept token reaches its expiry second, then it is refused, and stays refused', () => {
    vi.useFakeTimers({ toFake: ['Date'] });
    const token = signSession(config, { userId, sessionVersion: 1 });
    const { exp } = verifySession(config, token)!;
    vi.setSystemTime(exp * 1000 - 1000);
    expect(verifySession(config, token)).not.toBeNull();
    vi.setSystemTime(exp * 1000);
    expect(verifySession(config, token)).toBeNull();
    expect(verifySession(config, token)).toBeNull();
  });

  it('when a kept token’s sign-in passes its absolute lifetime, then it is refused even before its own expiry', () => {
    vi.useFakeTimers({ toFake: ['Date'] });
    const now = Math.floor(Date.now() / 1000);
    const absolute = config.sessionAbsoluteHours * 3600;
    // Signed (as a renewal would be) with an expiry past the sign-in's absolute end.
    const token = jwt.sign({ jti: 'j', sv: 1, auth_time: now - absolute + 60, exp: now + 600 }, config.jwtSecret, { subject: userId });
    expect(verifySession(config, token)).not.toBeNull();
    vi.setSystemTime((now + 60) * 1000);
    expect(verifySession(config, token)).toBeNull();
  });

  it('when a kept token is altered by one character of its signature, then the altered text is checked and refused', () => {
    const token = signSession(config, { userId, sessionVersion: 1 });
    expect(verifySession(config, token)).not.toBeNull();
    const last = token.at(-1) === 'A' ? 'B' : 'A';
    expect(verifySession(config, token.slice(0, -1) + last)).toBeNull();
  });

  it('when the secret changes, then a token kept under the old one is refused', () => {
    const token = signSession(config, { userId, sessionVersion: 1 });
    expect(verifySession(config, token)).not.toBeNull();
    const rotated = { ...config, jwtSecret: 'another-secret-for-the-session-memory-tests-2' };
    expect(verifySession(rotated, token)).toBeNull();
    expect(verifySession(config, token)).not.toBeNull();
  });
});
