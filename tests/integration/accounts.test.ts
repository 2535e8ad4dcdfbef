import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auth, readSession } from '~/lib/server/auth';
import { db } from '~/lib/server/db';
import { insertSettings, useTempDatabase, type TestData } from '../_fixtures';
import { authRequest, firstLink, listMail, useMailCatcher, waitForMail } from '../_accounts';
import type { MailCatcher } from '../../src/fakes/mail/catcher';

let data: TestData;
let catcher: MailCatcher;
let catcherUrl: string;

beforeAll(async () => {
  data = await useTempDatabase();
  ({ catcher, url: catcherUrl } = await useMailCatcher(data.dir));
  await insertSettings({ shopName: 'Test Shop' });
});
afterAll(async () => {
  await catcher.close();
  await data.cleanup();
});

async function sessionFor(cookie: string) {
  return readSession(new Headers({ Cookie: cookie }));
}

/** Signs up, confirms the address through the mailed link, returns the signed-in cookie. */
async function verifiedAccount(email: string, password = 'correct horse battery'): Promise<string> {
  const up = await authRequest('/sign-up/email', { body: { name: 'Ada Buyer', email, password, callbackURL: '/account?verified=1' } });
  expect(up.status).toBe(200);
  const mail = await waitForMail(catcherUrl, email, /confirm/i);
  const verified = await authRequest(firstLink(mail.text), { method: 'GET' });
  expect(verified.status).toBe(302);
  expect(verified.headers.get('location')).toBe('/account?verified=1');
  return verified.cookie;
}

describe('accounts through better-auth and the Sequelize adapter', () => {
  it('signs up, mails a confirmation link, and refuses sign-in until the address is confirmed', async () => {
    const email = 'ada@example.com';
    const up = await authRequest('/sign-up/email', { body: { name: 'Ada', email, password: 'a long enough pass', callbackURL: '/account' } });
    expect(up.status).toBe(200);
    const early = await authRequest('/sign-in/email', { body: { email, password: 'a long enough pass' } });
    expect(early.status).toBe(403);
    expect(early.body.code).toBe('EMAIL_NOT_VERIFIED');
    const mail = await waitForMail(catcherUrl, email, /confirm/i);
    expect(mail.html).toContain('Test Shop');
    const verified = await authRequest(firstLink(mail.text), { method: 'GET' });
    expect(verified.status).toBe(302);
    const session = await sessionFor(verified.cookie);
    expect(session?.user).toMatchObject({ email, role: 'buyer', emailVerified: true });
  });

  it('gives the same answer for a wrong password and an unknown e-mail', async () => {
    await verifiedAccount('ben@example.com');
    const wrong = await authRequest('/sign-in/email', { body: { email: 'ben@example.com', password: 'not the password' }, ip: '198.51.100.1' });
    const unknown = await authRequest('/sign-in/email', { body: { email: 'nobody@example.com', password: 'not the password' }, ip: '198.51.100.2' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(wrong.status);
    expect(unknown.body).toEqual(wrong.body);
  });

  it('applies the password length rules (OWASP ASVS 5.0 6.2.1 and 6.2.9)', async () => {
    const tryPassword = (email: string, password: string) => authRequest('/sign-up/email', { body: { name: 'P', email, password } });
    expect((await tryPassword('seven@example.com', '1234567')).status).toBe(400); // 7 < 8: refused (ASVS 6.2.1)
    expect((await tryPassword('eight@example.com', '12345678')).status).toBe(200); // 8 accepted (ASVS 6.2.1)
    expect((await tryPassword('sixtyfour@example.com', 'x'.repeat(64))).status).toBe(200); // 64 accepted (ASVS 6.2.9)
  });

  it('sets the session cookie HttpOnly and SameSite=Lax, and signing out ends the session', async () => {
    await verifiedAccount('cleo@example.com');
    const signIn = await authRequest('/sign-in/email', { body: { email: 'cleo@example.com', password: 'correct horse battery' }, ip: '198.51.100.3' });
    expect(signIn.status).toBe(200);
    const raw = signIn.headers.getSetCookie().find((c) => c.includes('session_token'))!;
    expect(raw).toMatch(/HttpOnly/i);
    expect(raw).toMatch(/SameSite=Lax/i);
    expect(await sessionFor(signIn.cookie)).not.toBeNull();
    const out = await authRequest('/sign-out', { body: {}, cookie: signIn.cookie });
    expect(out.status).toBe(200);
    expect(await sessionFor(signIn.cookie)).toBeNull();
  });

  it('resets a password by mailed link, once, and refuses an expired link', async () => {
    const email = 'dora@example.com';
    await verifiedAccount(email, 'the old password');
    expect((await authRequest('/request-password-reset', { body: { email, redirectTo: '/reset-password' } })).status).toBe(200);
    const mail = await waitForMail(catcherUrl, email, /password/i);
    const follow = await authRequest(firstLink(mail.text), { method: 'GET' });
    expect(follow.status).toBe(302);
    const token = new URL(follow.headers.get('location')!, 'http://x').searchParams.get('token')!;
    expect(token).toBeTruthy();
    const reset = await authRequest('/reset-password', { body: { newPassword: 'the new password', token } });
    expect(reset.status, JSON.stringify(reset.body) + follow.headers.get('location')).toBe(200);
    expect((await authRequest('/reset-password', { body: { newPassword: 'another password', token } })).status).toBe(400);
    expect((await authRequest('/sign-in/email', { body: { email, password: 'the old password' }, ip: '198.51.100.4' })).status).toBe(401);
    expect((await authRequest('/sign-in/email', { body: { email, password: 'the new password' }, ip: '198.51.100.4' })).status).toBe(200);

    await authRequest('/request-password-reset', { body: { email, redirectTo: '/reset-password' } });
    await db().query("UPDATE verifications SET expires_at = '2000-01-01T00:00:00.000Z' WHERE identifier LIKE 'reset-password:%'");
    const mails = await listMail(catcherUrl, email);
    const latest = (await (await fetch(`${catcherUrl}/messages/${mails.filter((m) => /password/i.test(m.subject))[0]!.id}`)).json()) as { text: string };
    const expired = await authRequest(firstLink(latest.text), { method: 'GET' });
    expect(expired.headers.get('location')).toMatch(/error=INVALID_TOKEN/);
  });

  it('limits sign-in attempts from one address', async () => {
    const attempt = () => authRequest('/sign-in/email', { body: { email: 'nobody@example.com', password: 'guess guess' }, ip: '192.0.2.77' });
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++) statuses.push((await attempt()).status);
    expect(statuses.slice(0, 5), statuses.join()).toEqual([401, 401, 401, 401, 401]);
    expect(statuses[5]).toBe(429);
    // another address is not affected
    expect((await authRequest('/sign-in/email', { body: { email: 'nobody@example.com', password: 'guess guess' }, ip: '192.0.2.78' })).status).toBe(401);
  });

  it('changes roles and disables accounts; a disabled account is signed out at once', async () => {
    const ctx = await auth().$context;
    const adminUser = await ctx.internalAdapter.createUser({ email: 'boss@example.com', name: 'Boss', emailVerified: true, role: 'admin' }, { method: 'admin' });
    await ctx.internalAdapter.linkAccount({ userId: adminUser.id, providerId: 'credential', accountId: adminUser.id, password: await ctx.password.hash('boss password') });
    const adminIn = await authRequest('/sign-in/email', { body: { email: 'boss@example.com', password: 'boss password' }, ip: '198.51.100.9' });
    expect(adminIn.status).toBe(200);

    const buyerCookie = await verifiedAccount('eve@example.com');
    const buyer = (await sessionFor(buyerCookie))!;
    const promote = await authRequest('/admin/set-role', { body: { userId: buyer.user.id, role: 'photographer' }, cookie: adminIn.cookie });
    expect(promote.status).toBe(200);
    expect((await sessionFor(buyerCookie))?.user.role).toBe('photographer');

    // a buyer cannot use the admin endpoints
    const sneaky = await authRequest('/admin/set-role', { body: { userId: buyer.user.id, role: 'admin' }, cookie: buyerCookie });
    expect(sneaky.status).toBe(403);

    const ban = await authRequest('/admin/ban-user', { body: { userId: buyer.user.id, banReason: 'test' }, cookie: adminIn.cookie });
    expect(ban.status).toBe(200);
    expect(await sessionFor(buyerCookie)).toBeNull();
    const again = await authRequest('/sign-in/email', { body: { email: 'eve@example.com', password: 'correct horse battery' }, ip: '198.51.100.10' });
    expect(again.status).toBe(403);
    expect(again.body.code).toBe('BANNED_USER');
  });

  it('refuses a sign-in posted from another site', async () => {
    await verifiedAccount('fred@example.com');
    const response = await auth().handler(new Request('http://localhost:4321/api/auth/sign-in/email', {
      method: 'POST',
      headers: { Origin: 'https://elsewhere.example', 'Content-Type': 'application/json', 'x-stillmark-client-ip': '198.51.100.77' },
      body: JSON.stringify({ email: 'fred@example.com', password: 'correct horse battery' }),
    }));
    expect(response.status).toBe(403);
    expect(response.headers.getSetCookie()).toEqual([]);
  });

  it('reads a forged or missing session cookie as signed out', async () => {
    expect(await sessionFor('')).toBeNull();
    expect(await sessionFor('stillmark.session_token=forged.value')).toBeNull();
  });
});
