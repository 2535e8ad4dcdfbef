/**
 * The session cookie when the shop is served over https: Secure, with the __Secure- name prefix, still
 * HttpOnly and SameSite=Lax; a fresh, unguessable token on every sign-in. (HttpOnly and SameSite=Lax on
 * http, sign-out and the sign-in rate limit are in accounts.test.ts; the cookie the built app sends over
 * http is checked in tests/e2e/security-pages.test.ts.)
 *
 * Sources: OWASP ASVS 5.0 3.3.1 (Secure attribute, and the __Host-/__Secure- prefix), 3.3.2 (SameSite),
 * 3.3.4 (HttpOnly), 7.2.3 (reference tokens from a CSPRNG, ≥ 128 bits of entropy), 7.2.4 (a new token on
 * authentication); RFC 6265bis §4.1.3.1 (a __Secure- cookie must be set with Secure from a secure origin);
 * TRADE-FACTS §9 check values ("session id entropy ≥ 128 bits from CSPRNG").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auth, CLIENT_IP_HEADER, readSession, resetAuthForTests } from '~/lib/server/auth';
import { resetConfigForTests } from '~/lib/server/config';
import { insertSettings, useTempDatabase, type TestData } from '../_fixtures';

const ORIGIN = 'https://shop.example';
let data: TestData;

beforeAll(async () => {
  data = await useTempDatabase();
  process.env.PUBLIC_ORIGIN = ORIGIN;
  resetConfigForTests();
  resetAuthForTests();
  await insertSettings();
  const ctx = await auth().$context;
  const user = await ctx.internalAdapter.createUser({ email: 'secure@example.com', name: 'Secure Buyer', emailVerified: true, role: 'buyer' }, { method: 'admin' } as never);
  await ctx.internalAdapter.linkAccount({ userId: user.id, providerId: 'credential', accountId: user.id, password: await ctx.password.hash('a secure password') });
});
afterAll(async () => {
  delete process.env.PUBLIC_ORIGIN;
  resetConfigForTests();
  resetAuthForTests();
  await data.cleanup();
});

let address = 10;
async function signIn(): Promise<string> {
  const response = await auth().handler(new Request(`${ORIGIN}/api/auth/sign-in/email`, {
    method: 'POST',
    headers: { Origin: ORIGIN, 'Content-Type': 'application/json', [CLIENT_IP_HEADER]: `198.51.100.${address++}` },
    body: JSON.stringify({ email: 'secure@example.com', password: 'a secure password' }),
  }));
  expect(response.status).toBe(200);
  return response.headers.getSetCookie().find((c) => c.includes('session_token'))!;
}

describe('the session cookie on an https origin', () => {
  it('is Secure with the __Secure- prefix, HttpOnly, SameSite=Lax, for the whole site', async () => {
    const cookie = await signIn();
    expect(cookie).toMatch(/^__Secure-stillmark\.session_token=/);
    expect(cookie).toMatch(/;\s*Secure(;|$)/i);
    expect(cookie).toMatch(/;\s*HttpOnly/i);
    expect(cookie).toMatch(/;\s*SameSite=Lax/i);
    expect(cookie).toMatch(/;\s*Path=\//i);
    // and the shop reads it back (the middleware looks for "session_token" in the Cookie header)
    const pair = cookie.split(';')[0]!;
    expect(pair).toContain('session_token');
    expect((await readSession(new Headers({ Cookie: pair })))?.user.email).toBe('secure@example.com');
  });

  it('carries a fresh token of at least 128 random bits on every sign-in, signed so it cannot be forged', async () => {
    const tokens = new Set<string>();
    for (let i = 0; i < 3; i++) {
      const value = decodeURIComponent((await signIn()).split(';')[0]!.split('=').slice(1).join('='));
      const [token, signature] = value.split('.');
      // 22 characters of [A-Za-z0-9] hold 22 × log2(62) ≈ 131 bits (ASVS 7.2.3 asks for 128)
      expect(token).toMatch(/^[A-Za-z0-9]{22,}$/);
      expect(signature!.length).toBeGreaterThanOrEqual(43); // an HMAC-SHA256 in base64 (32 bytes)
      tokens.add(token!);
    }
    expect(tokens.size).toBe(3); // ASVS 7.2.4: a new token for each authentication
    const forged = `__Secure-stillmark.session_token=${[...tokens][0]}.${'A'.repeat(43)}=`;
    expect(await readSession(new Headers({ Cookie: forged }))).toBeNull();
  });
});
