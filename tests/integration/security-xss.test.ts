/**
 * XSS payloads in every text a buyer or the studio controls, carried through the real flows into the shop's
 * mails and PDFs. Pages are checked in the browser tests (tests/e2e/security-pages.test.ts).
 *
 * Sources: OWASP XSS Prevention Cheat Sheet (output encoding for HTML content and attributes, rule #1/#2;
 * URL schemes in links), OWASP ASVS 5.0 1.2.1 / 1.2.2 (output encoding for HTML and URLs), OWASP Email
 * Security / "Email header injection" (CR LF in a header value must not add headers or recipients; RFC
 * 5322 §2.2: header fields end at CRLF); ISO 32000-1:2008 §12.6 (actions: JavaScript, Launch, URI,
 * SubmitForm, ImportData), §12.6.3 (OpenAction, AA trigger events), §7.11.4 (embedded files), §12.7
 * (AcroForm/XFA): a certificate must draw the payload as text and carry none of those.
 * Mail templates' own escaping is unit-tested in tests/unit/mail-templates.test.ts.
 */
import zlib from 'node:zlib';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { APIContext } from 'astro';
import { PDFArray, PDFDict, PDFDocument, PDFName, PDFRawStream, PDFStream, PDFString, PDFHexString, type PDFPage } from 'pdf-lib';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { GET as licencePdf } from '~/pages/api/account/licences/[id]/certificate';
import { GET as printPdf } from '~/pages/api/account/prints/[serial]/certificate';
import { GET as jobSheet } from '~/pages/api/dispatch/orders/[number]/lines/[lineId]/lab-pack/sheet';
import { checkoutInput } from '~/lib/checkout';
import { answerInput, declineInput, enquiryInput } from '~/lib/quote-schemas';
import { licenceTierFields, paperFields, shopSettingsInput } from '~/lib/settings-schemas';
import { workDetailsInput } from '~/lib/studio-schemas';
import { refundInput } from '~/lib/refund-schemas';
import { createEnquiry, declineQuote } from '~/lib/server/licence-quotes';
import { requestRefund } from '~/lib/server/refunds';
import { makeDerivatives } from '~/lib/server/images';
import { Order, Work } from '~/lib/server/models';
import type { SessionUser } from '~/lib/server/auth-types';
import { openSecurityShop, type SecurityShop, type ShopTexts } from '../_security';
import { listMail } from '../_accounts';
import { ESCAPED_SCRIPT, KEYWORDS, LONG, NO_ANGLES, RAW_MARKUP, SHORT, VECTORS, dangerousMarkup } from '../_xss';

const MEDIUM = `${VECTORS.attribute} ${VECTORS.textarea} ${VECTORS.url}`; // for fields of up to 160 characters
const texts: Partial<ShopTexts> = {
  shopName: `Shop ${SHORT}`,
  photographerName: SHORT,
  seriesTitle: SHORT,
  seriesDescription: LONG,
  workTitle: `W ${SHORT}`,
  caption: LONG,
  altText: LONG,
  keywords: KEYWORDS,
  tierName: SHORT,
  tierTerms: `Terms with ${NO_ANGLES}`,
  paperName: SHORT,
  licenseeName: SHORT,
  licenseeOrganisation: MEDIUM,
  intendedUse: LONG,
  shipping: { name: SHORT, line1: LONG, line2: SHORT, city: SHORT, postalCode: 'EH6 6AA', country: 'GB' },
  enquiryMessage: LONG,
  quoteLicenseeName: SHORT,
  quoteLicenseeOrganisation: MEDIUM,
  quoteTerms: LONG,
  quoteReply: LONG,
  buyerName: SHORT,
};

let s: SecurityShop;
beforeAll(async () => {
  s = await openSecurityShop({ texts, labPack: true });
}, 60_000);
afterAll(async () => s?.close());

interface Caught { subject: string; text: string | null; html: string | null; headers: [string, string][]; envelope: { to: string[] }; to: string[] }
async function mailsTo(address: string): Promise<Caught[]> {
  const list = await listMail(s.catcherUrl, address);
  return Promise.all(list.map(async (m) => (await fetch(`${s.catcherUrl}/messages/${m.id}`)).json() as Promise<Caught>));
}
async function mailTo(address: string, subject: RegExp): Promise<Caught> {
  await expect.poll(async () => (await mailsTo(address)).some((m) => subject.test(m.subject)), { timeout: 10_000 }).toBe(true);
  return (await mailsTo(address)).find((m) => subject.test(m.subject))!;
}

/** Tags our mails are made of; anything else in an HTML part would be injected. */
const MAIL_TAGS = ['html', 'head', 'meta', 'title', 'body', 'div', 'table', 'tr', 'td', 'h1', 'p', 'a', 'br', 'ul', 'li', 'strong'];

function expectInertHtml(html: string, label: string) {
  expect(dangerousMarkup(html, MAIL_TAGS), label).toEqual([]);
  for (const raw of RAW_MARKUP) expect(html, `${label}: raw ${raw}`).not.toContain(raw);
  // …and the payload was really there, escaped (so the check above is not vacuous)
  expect(html, label).toContain(ESCAPED_SCRIPT);
}

describe('the payloads are texts the shop accepts from people', () => {
  it('passes the same zod schemas the endpoints use', () => {
    const details = workDetailsInput.shape;
    for (const [schema, value] of [
      [details.title, texts.workTitle], [details.caption, texts.caption], [details.altText, texts.altText],
      [licenceTierFields.shape.name, texts.tierName], [licenceTierFields.shape.terms, texts.tierTerms], [paperFields.shape.name, texts.paperName],
      [shopSettingsInput.shape.shopName, texts.shopName], [shopSettingsInput.shape.photographerName, texts.photographerName], [shopSettingsInput.shape.watermarkText, SHORT],
      [declineInput.shape.reason, LONG],
    ] as const) {
      const parsed = (schema as { safeParse: (v: unknown) => { success: boolean; error?: unknown } }).safeParse(value);
      expect(parsed.success, `${JSON.stringify(value)}: ${JSON.stringify(parsed.error)}`).toBe(true);
    }
    // Keywords are letters and numbers only, so markup never gets in (the rows below carry it anyway, as defence in depth).
    for (const k of KEYWORDS) expect(details.keywords.safeParse([k]).success, k).toBe(false);
    expect(checkoutInput.safeParse({
      lines: [{ kind: 'licence', workId: 1, tierId: 1 }, { kind: 'print', offerId: 1, mode: 'fill', quantity: 1 }],
      licensee: { name: texts.licenseeName, organisation: texts.licenseeOrganisation, intendedUse: texts.intendedUse }, shipping: texts.shipping,
    }).success).toBe(true);
    expect(enquiryInput.safeParse({ workId: 1, use: 'editorial', media: MEDIUM, printRun: null, territory: SHORT, termMonths: 12, exclusivity: 'none', licenseeName: texts.quoteLicenseeName, licenseeOrganisation: texts.quoteLicenseeOrganisation, message: texts.enquiryMessage }).success).toBe(true);
    expect(answerInput('GBP').safeParse({ use: 'editorial', media: MEDIUM, cap: null, capUnit: null, territory: SHORT, termMonths: 12, exclusivity: 'none', terms: LONG, price: '10', validityDays: 7, reply: LONG }).success).toBe(true);
    expect(refundInput.safeParse({ idempotencyKey: 'x'.repeat(20), reason: 'other', note: LONG, whole: true }).success).toBe(true);
  });
});

describe('mail: HTML parts escape every payload; plain-text mails carry no HTML at all', () => {
  it('escapes the enquiry mailed to the studio (licensee, organisation, message, work title)', async () => {
    const mail = await mailTo(s.users.photographer.email, /licence enquiry/);
    expectInertHtml(mail.html!, 'enquiry');
    expect(mail.text).toContain(LONG); // the plain part keeps the words as typed: text is never rendered as markup
  });

  it('escapes the quote mailed to the buyer (work title, terms, the studio’s reply)', async () => {
    const mail = await mailTo(s.users.owner.email, /licence quote/);
    expectInertHtml(mail.html!, 'quote');
  });

  it('escapes the receipt (work title, tier and paper names in the lines)', async () => {
    const mail = await mailTo(s.users.owner.email, /receipt/);
    expectInertHtml(mail.html!, 'receipt');
  });

  it('escapes a declined enquiry’s reason', async () => {
    const enquiry = await createEnquiry(s.users.otherBuyer, { workId: s.ids.work, use: 'editorial', media: MEDIUM, printRun: null, territory: SHORT, termMonths: 12, exclusivity: 'none', licenseeName: SHORT, licenseeOrganisation: '', message: LONG });
    await declineQuote({ id: s.users.admin.id, email: s.users.admin.email }, enquiry.id, LONG);
    const mail = await mailTo(s.users.otherBuyer.email, /licence enquiry/);
    expectInertHtml(mail.html!, 'decline');
  });

  it('sends the refund notice (with the admin’s note) as plain text only', async () => {
    await requestRefund(s.order.number, { id: s.users.admin.id, email: s.users.admin.email }, refundInput.parse({ idempotencyKey: 'security-xss-refund-0001', reason: 'other', note: SHORT, items: [{ lineId: s.order.licenceLineId }] }));
    const mail = await mailTo(s.users.owner.email, /refund of/);
    expect(mail.html).toBeNull();
    expect(mail.text).toContain(SHORT);
  });

  it('keeps CR LF in a title out of the headers: no added header, no added recipient (RFC 5322 §2.2)', async () => {
    const title = 'Pear\r\nBcc: attacker@evil.example\r\nX-Injected: 1';
    const work = await Work.create({ ...(await Work.findByPk(s.ids.work))!.get(), id: undefined, slug: 'header-injection', title, originalSha256: '1'.repeat(64) } as never);
    const before = (await mailsTo('attacker@evil.example')).length;
    await createEnquiry(s.users.owner, { workId: work.id, use: 'editorial', media: 'Web', printRun: null, territory: 'UK', termMonths: 12, exclusivity: 'none', licenseeName: 'A', licenseeOrganisation: '', message: 'B' });
    const mail = await mailTo(s.users.photographer.email, /Pear/);
    expect(mail.subject).not.toMatch(/[\r\n]/);
    expect(mail.headers.map(([name]) => name.toLowerCase())).not.toContain('x-injected');
    expect(mail.headers.map(([name]) => name.toLowerCase())).not.toContain('bcc');
    expect(mail.envelope.to.every((to) => [s.users.photographer.email, s.users.admin.email].includes(to))).toBe(true);
    expect((await mailsTo('attacker@evil.example')).length).toBe(before);
  });
});

// ------------------------------------------------------------------------------------------------ PDFs

/** Every string the pages show (hex or literal strings to Tj/TJ), read as Latin-1, whitespace removed. */
function shownText(doc: PDFDocument): string {
  const out: string[] = [];
  const streamsOf = (page: PDFPage) => {
    const contents = page.node.Contents();
    const list = contents instanceof PDFArray ? contents.asArray().map((r) => page.doc.context.lookup(r)) : [contents];
    return list.map((st) => {
      const raw = Buffer.from((st as PDFRawStream).getContents());
      return (st as PDFRawStream).dict.get(PDFName.of('Filter')) === PDFName.of('FlateDecode') ? zlib.inflateSync(raw) : raw;
    });
  };
  for (const page of doc.getPages()) {
    for (const content of streamsOf(page)) {
      for (const m of content.toString('latin1').matchAll(/<([0-9A-Fa-f\s]*)>\s*Tj|\(((?:\\.|[^\\)])*)\)\s*Tj/g)) {
        if (m[1] !== undefined) out.push(Buffer.from(m[1].replace(/\s/g, ''), 'hex').toString('latin1'));
        else out.push(m[2]!.replace(/\\(.)/g, '$1'));
      }
    }
  }
  return out.join('').replace(/\s+/g, '');
}

/** Names that make a PDF act rather than show (ISO 32000-1 §12.6, §12.7, §7.11.4). */
const ACTIVE = ['JS', 'JavaScript', 'OpenAction', 'AA', 'Launch', 'SubmitForm', 'ImportData', 'EmbeddedFile', 'EmbeddedFiles', 'RichMedia', 'XFA', 'AcroForm', 'GoToR', 'GoToE'];

async function expectInertPdf(bytes: Uint8Array, expectedShown: string[], label: string) {
  expect(Buffer.from(bytes.subarray(0, 5)).toString('latin1')).toBe('%PDF-');
  const doc = await PDFDocument.load(bytes);
  const uris: string[] = [];
  for (const [, object] of doc.context.enumerateIndirectObjects()) {
    const dict = object instanceof PDFDict ? object : object instanceof PDFStream ? object.dict : null;
    if (!dict) continue;
    for (const key of dict.keys()) expect(ACTIVE, `${label}: /${key.decodeText()}`).not.toContain(key.decodeText());
    const s = dict.get(PDFName.of('S'));
    if (s instanceof PDFName) expect(['URI'], `${label}: action /${s.decodeText()}`).toContain(s.decodeText());
    const uri = dict.get(PDFName.of('URI'));
    if (uri instanceof PDFString || uri instanceof PDFHexString) uris.push(uri.decodeText());
  }
  for (const uri of uris) expect(uri, label).toMatch(/^https?:\/\//);
  const shown = shownText(doc);
  for (const text of expectedShown) expect(shown, `${label} shows ${text}`).toContain(text.replace(/\s+/g, ''));
}

const ctx = (params: Record<string, string>, user: SessionUser) => ({ params, locals: { user, session: null } }) as unknown as APIContext;

describe('PDFs draw every payload as text and carry nothing executable', () => {
  it('licence certificate: shop, photographer, work, licensee, organisation, tier name and terms', async () => {
    const response = await licencePdf(ctx({ id: s.licenceId }, s.users.owner));
    expect(response.status).toBe(200);
    await expectInertPdf(new Uint8Array(await response.arrayBuffer()), [SHORT, VECTORS.attribute, VECTORS.textarea, VECTORS.url], 'licence certificate');
  });

  it('certificate of authenticity: shop, photographer, work title, paper', async () => {
    const response = await printPdf(ctx({ serial: s.serial }, s.users.owner));
    expect(response.status).toBe(200);
    await expectInertPdf(new Uint8Array(await response.arrayBuffer()), [SHORT], 'print certificate');
  });

  it('lab job sheet: work title, paper, and every line of the shipping address', async () => {
    const response = await jobSheet(ctx({ number: s.order.number, lineId: String(s.order.printLineId) }, s.users.admin));
    expect(response.status).toBe(200);
    await expectInertPdf(new Uint8Array(await response.arrayBuffer()), [SHORT, VECTORS.script, VECTORS.url], 'job sheet');
    const order = (await Order.findByPk(s.order.id))!;
    expect(order.shippingAddress?.line1).toBe(LONG); // stored exactly as typed; only its rendering is encoded
  });
});

describe('the watermark draws the shop’s text as text', () => {
  it('makes previews from a payload watermark (Pango markup escaped, so the text is not read as markup)', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'stillmark-watermark-'));
    try {
      const original = path.join(dir, 'original.jpg');
      await sharp({ create: { width: 800, height: 600, channels: 3, background: '#556677' } }).jpeg().toFile(original);
      // Unescaped, `<img …>` and `</textarea>` are malformed Pango markup and the render throws.
      const made = await makeDerivatives(original, { derivativesDir: dir, watermarkText: `${VECTORS.attribute}${VECTORS.textarea} & Co`, contentHash: 'f'.repeat(64) });
      expect(made.derivatives.variants.length).toBeGreaterThan(0);
      const plain = await makeDerivatives(original, { derivativesDir: path.join(dir, 'plain'), watermarkText: 'Plain', contentHash: 'e'.repeat(64) });
      // the payload's glyphs were drawn: the marked preview differs from one marked with a plain word
      const a = await sharp(path.join(dir, made.derivatives.key, 'sm.jpg')).raw().toBuffer();
      const b = await sharp(path.join(dir, 'plain', plain.derivatives.key, 'sm.jpg')).raw().toBuffer();
      expect(a.equals(b)).toBe(false);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
