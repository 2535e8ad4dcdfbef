/**
 * Signed, expiring download links. The token names a download grant and its expiry and carries an
 * HMAC over both, so it cannot be altered or extended; the grant row counts the downloads.
 */
import crypto from 'node:crypto';
import { config } from './config';

function sign(grantId: number, expiresAt: number): string {
  return crypto.createHmac('sha256', config().authSecret).update(`download:${grantId}:${expiresAt}`).digest('base64url');
}

export function downloadToken(grantId: number, expiresAt: Date): string {
  const exp = Math.floor(expiresAt.getTime() / 1000);
  return `${grantId}.${exp}.${sign(grantId, exp)}`;
}

export type TokenCheck = { ok: true; grantId: number } | { ok: false; reason: 'malformed' | 'tampered' | 'expired' };

export function checkDownloadToken(token: string, now = new Date()): TokenCheck {
  const match = /^(\d{1,12})\.(\d{1,12})\.([A-Za-z0-9_-]{43})$/.exec(token);
  if (!match) return { ok: false, reason: 'malformed' };
  const grantId = Number(match[1]);
  const exp = Number(match[2]);
  const expected = Buffer.from(sign(grantId, exp));
  const given = Buffer.from(match[3]!);
  if (expected.length !== given.length || !crypto.timingSafeEqual(expected, given)) return { ok: false, reason: 'tampered' };
  if (exp * 1000 <= now.getTime()) return { ok: false, reason: 'expired' };
  return { ok: true, grantId };
}
