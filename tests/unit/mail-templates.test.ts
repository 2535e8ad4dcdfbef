import { describe, expect, it } from 'vitest';
import { escapeHtml, resetPassword, verifyEmail } from '~/lib/server/mail-templates';

const hostile = '<script>alert(1)</script>';
const url = 'https://shop.example.test/api/auth/verify-email?token=abc&callbackURL=%2Faccount';

describe('escapeHtml', () => {
  it('escapes the five characters that matter in content and quoted attributes', () => {
    // HTML Living Standard §13.1.2.6 (attribute values) and §13.1.2 (text): & < > " '
    expect(escapeHtml(`&<>"'`)).toBe('&amp;&lt;&gt;&quot;&#39;');
    expect(escapeHtml('plain words')).toBe('plain words');
  });
});

describe('verifyEmail', () => {
  const mail = verifyEmail({ shopName: 'Stillmark', name: hostile, url });

  it('names the shop and the task in the subject', () => {
    expect(mail.subject).toBe('Confirm your email address for Stillmark');
  });

  it('escapes the name in HTML and keeps it as written in the text', () => {
    expect(mail.html).not.toContain(hostile);
    expect(mail.html).toContain('Hello &lt;script&gt;alert(1)&lt;/script&gt;,');
    expect(mail.text).toContain(`Hello ${hostile},`);
  });

  it('carries the link in both parts, escaped in the HTML', () => {
    expect(mail.text).toContain(url);
    expect(mail.html).toContain(`href="${url.replace(/&/g, '&amp;')}"`);
    expect(mail.html).not.toContain('token=abc&callbackURL');
  });

  it('uses the shop look: paper ground, ink text, ember button, serif heading', () => {
    // Colours and type from STYLE.md / PRODUCT.md "Look" (src/styles/global.css --paper, --ink, --ember).
    expect(mail.html).toContain('#f6f2ea');
    expect(mail.html).toContain('#1c1a17');
    expect(mail.html).toContain('background-color:#a83a1c');
    expect(mail.html).toContain(`font-family:'DM Serif Display', Georgia, serif`);
    expect(mail.html.startsWith('<!doctype html>')).toBe(true);
  });

  it('greets without a name when there is none, and escapes a hostile shop name', () => {
    const plain = verifyEmail({ shopName: 'A & B <Studio>', name: '  ', url });
    expect(plain.text.startsWith('Hello,\n')).toBe(true);
    expect(plain.html).toContain('A &amp; B &lt;Studio&gt;');
    expect(plain.html).not.toContain('<Studio>');
    expect(plain.subject).toBe('Confirm your email address for A & B <Studio>');
  });

  it('keeps line breaks out of the subject', () => {
    expect(verifyEmail({ shopName: 'Still\r\nBcc: x@example.test', name: 'Ada', url }).subject).toBe(
      'Confirm your email address for Still Bcc: x@example.test',
    );
  });

  it('refuses links that are not absolute http(s) URLs', () => {
    expect(() => verifyEmail({ shopName: 'S', name: 'A', url: 'javascript:alert(1)' })).toThrow(/http/);
    expect(() => verifyEmail({ shopName: 'S', name: 'A', url: '/relative' })).toThrow(/absolute/);
  });
});

describe('resetPassword', () => {
  const resetUrl = 'https://shop.example.test/reset-password?token=xyz&next="/account"';
  const mail = resetPassword({ shopName: 'Stillmark', name: hostile, url: resetUrl, expiresMinutes: 60 });

  it('says what it is for in the subject', () => {
    expect(mail.subject).toBe('Reset your Stillmark password');
  });

  it('escapes the name and the link in HTML, keeps both raw in text', () => {
    expect(mail.html).not.toContain(hostile);
    expect(mail.html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(mail.text).toContain(hostile);
    expect(mail.text).toContain(resetUrl);
    expect(mail.html).toContain('token=xyz&amp;next=&quot;/account&quot;');
  });

  it('says how long the link lasts, in words', () => {
    expect(mail.text).toContain('after 1 hour');
    expect(mail.html).toContain('after 1 hour');
    expect(resetPassword({ shopName: 'S', name: 'A', url: resetUrl, expiresMinutes: 30 }).text).toContain('after 30 minutes');
    expect(resetPassword({ shopName: 'S', name: 'A', url: resetUrl, expiresMinutes: 120 }).text).toContain('after 2 hours');
  });

  it('tells someone who did not ask that nothing changes', () => {
    expect(mail.text).toMatch(/did not ask for this.*password stays as it is/);
  });
});
