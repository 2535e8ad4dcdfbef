/**
 * The Content-Security-Policy and the same-origin rule for API writes (src/lib/server/csp.ts), and the
 * HTML reader the XSS tests rely on (tests/_xss.ts), checked against hand-made documents so it is known
 * to catch what it looks for.
 *
 * Sources: W3C CSP Level 3 §2.3.1 (hash-source: the base64 SHA-256 of the script element's text),
 * §6.7.2.12 (hashes make 'unsafe-inline' ignored); OWASP Content Security Policy Cheat Sheet (object-src
 * 'none', base-uri, frame-ancestors); OWASP CSRF Prevention Cheat Sheet ("Verifying Origin with standard
 * headers"; Fetch Metadata `Sec-Fetch-Site`); HTML Living Standard §13.2.5 (tokenization: quoted
 * attribute values end only at their quote).
 */
import crypto from 'node:crypto';
import { describe, expect, it } from 'vitest';
import islandScript from 'astro/runtime/server/astro-island.prebuilt.js';
import loadDirective from 'astro/runtime/client/load.prebuilt.js';
import { ASTRO_INLINE_SCRIPTS, CONTENT_SECURITY_POLICY, crossSiteApiWrite, scriptHashSource, shopOrigins } from '~/lib/server/csp';
import { dangerousMarkup, scanHtml } from '../_xss';

const directives = Object.fromEntries(CONTENT_SECURITY_POLICY.split(';').map((d) => d.trim().split(/\s+/)).map(([name, ...values]) => [name!, values]));

describe('the Content-Security-Policy', () => {
  it('allows scripts from the shop and, inline, only Astro’s island bootstrap and directives, by hash', () => {
    expect(directives['script-src']![0]).toBe("'self'");
    expect(directives['script-src']).not.toContain("'unsafe-inline'");
    expect(directives['script-src']).not.toContain("'unsafe-eval'");
    expect(directives['script-src']!.slice(1)).toEqual(ASTRO_INLINE_SCRIPTS.map(scriptHashSource));
    expect(ASTRO_INLINE_SCRIPTS).toContain(islandScript);
    expect(ASTRO_INLINE_SCRIPTS).toContain(loadDirective);
  });

  it('computes hash sources the CSP way: base64 of the SHA-256 of the UTF-8 text (CSP 3 §2.3.1)', () => {
    // `echo -n 'doSomething();' | openssl sha256 -binary | openssl base64` (a published worked example; OpenSSL is independent of node:crypto's use here)
    expect(scriptHashSource('doSomething();')).toBe("'sha256-RFWPLDbv2BY+rCkDzsE+0fr8ylGr2R2faWMhq4lfEQc='");
    expect(scriptHashSource('é')).toBe(`'sha256-${crypto.createHash('sha256').update(Buffer.from([0xc3, 0xa9])).digest('base64')}'`);
  });

  it('closes the other doors: no plugins, no <base> elsewhere, no framing, forms and fetches to the shop only', () => {
    expect(directives['object-src']).toEqual(["'none'"]);
    expect(directives['base-uri']).toEqual(["'self'"]);
    expect(directives['frame-ancestors']).toEqual(["'none'"]);
    expect(directives['form-action']).toEqual(["'self'"]);
    expect(directives['connect-src']).toEqual(["'self'"]);
    expect(directives['default-src']).toEqual(["'self'"]);
  });
});

describe('writes to the API from another site', () => {
  const own = shopOrigins('http://127.0.0.1:4321');
  const h = (headers: Record<string, string>) => new Headers(headers);

  it('knows both loopback names as the shop’s origin, and only the configured origin elsewhere', () => {
    expect(own).toEqual(['http://localhost:4321', 'http://127.0.0.1:4321']);
    expect(shopOrigins('https://shop.example/')).toEqual(['https://shop.example']);
  });

  it('refuses an Origin that is not the shop’s, "null", and Sec-Fetch-Site cross-site or same-site', () => {
    for (const origin of ['https://evil.example', 'http://127.0.0.1:4322', 'https://127.0.0.1:4321', 'null', 'http://localhost']) {
      expect(crossSiteApiWrite('POST', '/api/account/checkout', h({ origin }), own), origin).toBe(true);
    }
    expect(crossSiteApiWrite('PATCH', '/api/dispatch/people/x', h({ 'sec-fetch-site': 'cross-site' }), own)).toBe(true);
    expect(crossSiteApiWrite('DELETE', '/api/studio/papers/1', h({ 'sec-fetch-site': 'same-site' }), own)).toBe(true);
  });

  it('lets through the shop’s own pages, requests without browser headers, reads, the signed webhook and better-auth', () => {
    expect(crossSiteApiWrite('POST', '/api/account/checkout', h({ origin: 'http://127.0.0.1:4321', 'sec-fetch-site': 'same-origin' }), own)).toBe(false);
    expect(crossSiteApiWrite('PUT', '/api/studio/settings', h({}), own)).toBe(false);
    expect(crossSiteApiWrite('GET', '/api/dispatch/orders', h({ origin: 'https://evil.example' }), own)).toBe(false);
    expect(crossSiteApiWrite('POST', '/api/stripe/webhook', h({ origin: 'https://evil.example' }), own)).toBe(false);
    expect(crossSiteApiWrite('POST', '/api/auth/sign-in/email', h({ origin: 'https://evil.example' }), own)).toBe(false);
    expect(crossSiteApiWrite('POST', '/works/x', h({ origin: 'https://evil.example' }), own)).toBe(false);
  });
});

describe('the XSS tests’ HTML reader finds what it looks for', () => {
  it('flags unescaped payloads in text, in a broken-out attribute, after an early </textarea>, and javascript: links', () => {
    expect(dangerousMarkup('<p>"><img src=x onerror=alert(1)></p>')).toEqual(expect.arrayContaining(['<img onerror>', '<img src=x>']));
    expect(dangerousMarkup('<input value=""><svg onload=alert(1)>">')).toContain('<svg onload>');
    expect(dangerousMarkup('<textarea></textarea><script>alert(1)</script></textarea>')).toContain('<script>alert(1)</script>');
    expect(dangerousMarkup('<a href=" jav&#x61;script:alert(1)">x</a>')).toHaveLength(1);
    expect(dangerousMarkup('<p>hi</p>', ['p'])).toEqual([]);
    expect(dangerousMarkup('<div>hi</div>', ['p'])).toEqual(['<div>']);
  });

  it('leaves escaped payloads and markup inside quoted attributes and raw-text elements alone', () => {
    expect(dangerousMarkup('<p>&lt;script&gt;alert(1)&lt;/script&gt; &quot;&gt;&lt;img src=x onerror=alert(1)&gt;</p>')).toEqual([]);
    expect(dangerousMarkup('<meta content="&#34;><img src=x onerror=alert(1)><script>alert(1)</script>">')).toEqual([]);
    expect(dangerousMarkup('<title>&lt;script&gt;</title><textarea>&lt;/textarea&gt;</textarea>')).toEqual([]);
    expect(dangerousMarkup('<img src="data:image/webp;base64,AAAA">')).toEqual([]);
    expect(scanHtml('<script>var a = "<b>";</script><b>x</b>').scripts.map((s) => s.body)).toEqual(['var a = "<b>";']);
  });
});
