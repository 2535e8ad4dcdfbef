/**
 * The shop's emails, as subject + plain text + HTML. Pure: no I/O, every interpolated value escaped.
 * The HTML uses tables and inline styles because many mail clients ignore <style> and flexbox.
 */

export interface RenderedMail {
  subject: string;
  text: string;
  html: string;
}

const PAPER = '#f6f2ea';
const PAPER_RAISED = '#fcfaf5';
const INK = '#1c1a17';
const INK_SOFT = '#5c564e';
const RULE = '#dbd3c6';
const EMBER = '#a83a1c';
const SERIF = `'DM Serif Display', Georgia, serif`;
const SANS = `'Inter', system-ui, -apple-system, 'Segoe UI', Helvetica, Arial, sans-serif`;

const HTML_ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Escapes text for HTML element content and quoted attribute values. */
export function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (c) => HTML_ESCAPES[c]!);
}

/** Collapses line breaks and runs of spaces, for subjects and one-line greetings. */
function oneLine(value: string): string {
  return value.replace(/\s+/g, ' ').trim();
}

/** Links in our mail are absolute http(s) URLs; anything else (javascript:, relative) is a bug upstream. */
function checkedUrl(url: string): string {
  let parsed: URL;
  try {
    parsed = new URL(url);
  } catch (error) {
    throw new Error(`Mail link is not an absolute URL: ${url}`, { cause: error });
  }
  if (parsed.protocol !== 'https:' && parsed.protocol !== 'http:') throw new Error(`Mail link must be http(s): ${url}`);
  return url;
}

function greeting(name: string): string {
  const n = oneLine(name);
  return n ? `Hello ${n},` : 'Hello,';
}

/** "45 minutes", "1 hour", "2 hours", "90 minutes". */
function duration(minutes: number): string {
  if (minutes >= 60 && minutes % 60 === 0) {
    const hours = minutes / 60;
    return hours === 1 ? '1 hour' : `${hours} hours`;
  }
  return minutes === 1 ? '1 minute' : `${minutes} minutes`;
}

interface Letter {
  shopName: string;
  /** Shown by many mail clients beside the subject in the inbox list. */
  preview: string;
  heading: string;
  greeting: string;
  before: string[];
  action: { label: string; url: string };
  after: string[];
}

function paragraph(text: string): string {
  return `<p style="margin:0 0 16px;">${escapeHtml(text)}</p>`;
}

function layoutHtml(letter: Letter, subject: string): string {
  const shop = escapeHtml(oneLine(letter.shopName));
  const url = escapeHtml(letter.action.url);
  return `<!doctype html>
<html lang="en-GB">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="color-scheme" content="light">
<title>${escapeHtml(subject)}</title>
</head>
<body style="margin:0;padding:0;background-color:${PAPER};color:${INK};">
<div style="display:none;max-height:0;overflow:hidden;opacity:0;">${escapeHtml(letter.preview)}</div>
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" border="0" style="background-color:${PAPER};">
<tr><td align="center" style="padding:40px 16px;">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" border="0" style="max-width:560px;">
<tr><td style="padding:0 0 20px;border-bottom:1px solid ${RULE};font-family:${SERIF};font-size:24px;line-height:1.2;color:${INK};">${shop}</td></tr>
<tr><td style="padding:32px 0 8px;font-family:${SANS};font-size:16px;line-height:1.6;color:${INK};">
<h1 style="margin:0 0 20px;font-family:${SERIF};font-size:30px;font-weight:400;line-height:1.2;color:${INK};">${escapeHtml(letter.heading)}</h1>
${paragraph(letter.greeting)}
${letter.before.map(paragraph).join('\n')}
<table role="presentation" cellpadding="0" cellspacing="0" border="0" style="margin:8px 0 24px;">
<tr><td style="background-color:${EMBER};border-radius:2px;">
<a href="${url}" style="display:inline-block;padding:12px 24px;font-family:${SANS};font-size:15px;font-weight:600;color:${PAPER_RAISED};text-decoration:none;">${escapeHtml(letter.action.label)}</a>
</td></tr>
</table>
<p style="margin:0 0 16px;font-size:14px;color:${INK_SOFT};">If the button does not work, copy this address into your browser:<br>
<a href="${url}" style="color:${INK};word-break:break-all;">${url}</a></p>
${letter.after.map(paragraph).join('\n')}
</td></tr>
<tr><td style="padding:20px 0 0;border-top:1px solid ${RULE};font-family:${SANS};font-size:13px;line-height:1.5;color:${INK_SOFT};">${shop}</td></tr>
</table>
</td></tr>
</table>
</body>
</html>
`;
}

function layoutText(letter: Letter): string {
  return [
    letter.greeting,
    ...letter.before,
    `${letter.action.label}:\n${letter.action.url}`,
    ...letter.after,
    `— ${oneLine(letter.shopName)}`,
  ].join('\n\n') + '\n';
}

function render(subject: string, letter: Letter): RenderedMail {
  return { subject, text: layoutText(letter), html: layoutHtml(letter, subject) };
}

/** Asks a new account holder to confirm their address. */
export function verifyEmail({ shopName, name, url }: { shopName: string; name: string; url: string }): RenderedMail {
  const shop = oneLine(shopName);
  return render(`Confirm your email address for ${shop}`, {
    shopName: shop,
    preview: `One click to confirm the address on your ${shop} account.`,
    heading: 'Confirm your email address',
    greeting: greeting(name),
    before: [
      `Thank you for opening an account with ${shop}. Please confirm that this address is yours, so we can send your receipts, download links and certificates here.`,
    ],
    action: { label: 'Confirm my address', url: checkedUrl(url) },
    after: [`If you did not open an account with ${shop}, you can ignore this message and nothing more will happen.`],
  });
}

/** Sends the link to choose a new password; says how long it stays valid. */
export function resetPassword({ shopName, name, url, expiresMinutes }: { shopName: string; name: string; url: string; expiresMinutes: number }): RenderedMail {
  const shop = oneLine(shopName);
  const lasts = duration(expiresMinutes);
  return render(`Reset your ${shop} password`, {
    shopName: shop,
    preview: `A link to choose a new password, valid for ${lasts}.`,
    heading: 'Choose a new password',
    greeting: greeting(name),
    before: [`We received a request to reset the password for your ${shop} account. Use the link below to choose a new one.`],
    action: { label: 'Choose a new password', url: checkedUrl(url) },
    after: [
      `The link stops working after ${lasts}. If it has run out, you can ask for a new one from the sign-in page.`,
      'If you did not ask for this, you can ignore this message: your password stays as it is.',
    ],
  });
}
