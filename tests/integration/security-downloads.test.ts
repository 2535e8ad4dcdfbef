/**
 * Download links (`src/lib/server/download-links.ts`, GET /api/account/downloads/<token>): the token is
 * `<grant id>.<expiry, unix s>.<HMAC-SHA256 over both, base64url>`; the grant row counts downloads.
 *
 * Sources: OWASP ASVS 5.0 8.2.2 (data-specific authorization: another buyer's link is not found), 7.2.3 /
 * OWASP Session Management Cheat Sheet (tokens must not be forgeable: an altered id or expiry fails the
 * MAC), OWASP Business Logic (limits enforced server-side and atomically); RFC 4648 §5 (base64url: a
 * SHA-256 MAC is 32 bytes = 43 characters without padding). What it answers by design: 404 for anything
 * forged, malformed or not yours (nothing is confirmed to exist), 410 for a genuine link that expired,
 * is used up, or whose licence ended.
 * Basic cases (another person's link, one changed character, expired, the sixth download) are in
 * checkout.test.ts; this file covers the rest.
 */
import crypto from 'node:crypto';
import type { APIContext } from 'astro';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { GET as download } from '~/pages/api/account/downloads/[token]';
import { config } from '~/lib/server/config';
import { downloadToken } from '~/lib/server/download-links';
import { DownloadGrant, Licence } from '~/lib/server/models';
import type { SessionUser } from '~/lib/server/auth-types';
import { databaseDigest, openSecurityShop, type SecurityShop } from '../_security';

let s: SecurityShop;
beforeAll(async () => {
  s = await openSecurityShop();
}, 60_000);
afterAll(async () => s?.close());

async function get(token: string, user: SessionUser | null = s.users.owner) {
  const response = await download({ params: { token }, locals: { user, session: null } } as unknown as APIContext);
  const body = response.headers.get('content-type')?.startsWith('application/json') ? ((await response.json()) as { error: { code: string } }) : (await response.arrayBuffer(), null);
  return { status: response.status, code: body?.error.code ?? null };
}

/** The same signing the app uses, with the real secret, for links the shop could have issued. */
function signed(grantId: number, exp: number): string {
  const mac = crypto.createHmac('sha256', config().authSecret).update(`download:${grantId}:${exp}`).digest('base64url');
  return `${grantId}.${exp}.${mac}`;
}

describe('a tampered link is not found, and counts nothing', () => {
  it('refuses a changed grant id, a changed expiry, a cut or padded signature, and other shapes', async () => {
    const [id, exp, mac] = s.token.split('.') as [string, string, string];
    expect(mac).toHaveLength(43); // RFC 4648 §5: 32 bytes in base64url without padding
    // Another grant that exists (renewed for the same licence), named with the old signature.
    const other = await DownloadGrant.create({ licenceId: s.licenceId, expiresAt: new Date(Date.now() + 86_400_000), maxDownloads: 5 });
    const forged = [
      `${other.id}.${exp}.${mac}`, // another grant id, same MAC
      `${id}.${Number(exp) + 86_400 * 365}.${mac}`, // extended by a year, same MAC
      `${id}.${exp}.${mac.slice(0, 42)}`, // one character cut
      `${id}.${exp}.${mac.slice(0, 22)}`, // half the MAC
      `${id}.${exp}.${mac}=`, // padded
      `${id}.${exp}.${mac}A`, // one character more
      `${id}.${exp}.${Buffer.from(mac, 'base64url').toString('hex')}`, // the MAC in hex
      `${id}.${exp}.${'A'.repeat(43)}`,
      `${id}.${exp}`,
      `${id}..${mac}`,
      `-${id}.${exp}.${mac}`,
      `${id}.${exp}.${mac}.${mac}`,
      `${id}%2E${exp}%2E${mac}`,
      `../${s.token}`,
      '',
      `${id}.${exp}.${crypto.createHmac('sha256', 'a-guessed-secret').update(`download:${id}:${exp}`).digest('base64url')}`,
    ];
    const before = await databaseDigest();
    for (const token of forged) {
      expect(await get(token), token).toEqual({ status: 404, code: 'not_found' });
    }
    // Nothing was counted against the real grant or the other one.
    expect(await databaseDigest()).toBe(before);
    await other.destroy();
  });

  it('answers another buyer 404 for the owner’s genuine link, and counts nothing', async () => {
    const before = await databaseDigest();
    for (const who of [s.users.otherBuyer, s.users.photographer, s.users.admin]) expect(await get(s.token, who)).toEqual({ status: 404, code: 'not_found' });
    expect(await get(s.token, null)).toEqual({ status: 401, code: 'unauthenticated' });
    expect(await databaseDigest()).toBe(before);
  });
});

describe('a genuine link that no longer works says why (410)', () => {
  it('refuses a properly signed link whose expiry has passed', async () => {
    const past = Math.floor(Date.now() / 1000) - 1;
    expect(await get(signed(s.grantId, past))).toEqual({ status: 410, code: 'link_expired' });
    expect(await get(downloadToken(s.grantId, new Date(Date.now() - 60_000)))).toEqual({ status: 410, code: 'link_expired' });
  });

  it('refuses a link whose signed expiry is still ahead when the grant itself has expired', async () => {
    const grant = await DownloadGrant.create({ licenceId: s.licenceId, expiresAt: new Date(Date.now() - 1000), maxDownloads: 5 });
    // The token claims tomorrow, correctly signed; the stored grant ended a second ago and decides.
    const token = downloadToken(grant.id, new Date(Date.now() + 86_400_000));
    expect(await get(token)).toEqual({ status: 410, code: 'link_used_up' });
    await grant.destroy();
  });

  it('lets exactly the allowed number of downloads through, even when they arrive together', async () => {
    const grant = await DownloadGrant.create({ licenceId: s.licenceId, expiresAt: new Date(Date.now() + 86_400_000), maxDownloads: 3 });
    await grant.update({ downloads: 1 });
    const token = downloadToken(grant.id, grant.expiresAt);
    const results = await Promise.all(Array.from({ length: 6 }, () => get(token)));
    expect(results.filter((r) => r.status === 200)).toHaveLength(2); // 3 allowed, 1 already used
    expect(results.filter((r) => r.status === 410).every((r) => r.code === 'link_used_up')).toBe(true);
    await grant.reload();
    expect(grant.downloads).toBe(3);
    await grant.destroy();
  });

  it('refuses a live link once its licence is revoked, and counts nothing', async () => {
    const licence = (await Licence.findByPk(s.licenceId))!;
    await licence.update({ status: 'revoked', revokedAt: new Date(), revokedReason: 'test' });
    const grant = (await DownloadGrant.findByPk(s.grantId))!;
    const used = grant.downloads;
    expect(await get(s.token)).toEqual({ status: 410, code: 'licence_not_valid' });
    await grant.reload();
    expect(grant.downloads).toBe(used);
    await licence.update({ status: 'active', revokedAt: null, revokedReason: null });
    expect((await get(s.token)).status).toBe(200);
  });
});
