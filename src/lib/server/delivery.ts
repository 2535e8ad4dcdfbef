/**
 * The file a licence buyer downloads: the full-resolution original turned upright, converted to sRGB
 * with the sRGB profile embedded, as a quality-95 JPEG, with the licence written into it:
 * EXIF Artist and Copyright (CIPA DC-008 tags 0x013B, 0x8298) and an XMP packet holding the IPTC
 * rights fields and the PLUS licence fields (TRADE-FACTS §4.1, §7.2).
 */
import sharp, { type Sharp } from 'sharp';
import { z } from 'zod';
import { toAsciiText, toIsoDate } from '../certificate-text';
import { config } from './config';

// ---------------------------------------------------------------------------------------------
// Rights

const text = (label: string, max: number) =>
  z
    .string({ error: `${label} is missing.` })
    .trim()
    .min(1, `${label} is missing.`)
    .max(max, `${label} is longer than ${max} characters.`);

const calendarDay = (label: string) =>
  z.union([z.date(), z.iso.date()], { error: `${label} must be a date (YYYY-MM-DD).` }).transform((value) => toIsoDate(value));

const webAddress = (label: string) =>
  z
    .url({ protocol: /^https?$/, error: `${label} must be an http(s) address.` })
    .max(500, `${label} is longer than 500 characters.`)
    .transform((value) => new URL(value).href);

export const rightsInfoSchema = z
  .object({
    /** The photographer, as credited (dc:creator, EXIF Artist). */
    creator: text('Creator', 200),
    /** e.g. "© 2025 Zoë Ōkubo" (dc:rights, EXIF Copyright). */
    copyrightNotice: text('Copyright notice', 300),
    licenceId: text('Licence ID', 64).regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, 'Licence ID may hold only letters, digits, dots, hyphens and underscores.'),
    licenseeName: text('Licensee name', 300),
    startsOn: calendarDay('Start date'),
    /** Last day of the licence; null when it has no end. */
    endsOn: calendarDay('End date').nullable(),
    /** The licence terms in plain words (xmpRights:UsageTerms). */
    usageTerms: text('Usage terms', 8000),
    /** The licence's public check page (xmpRights:WebStatement). */
    webStatement: webAddress('Web statement'),
    licensorName: text('Licensor name', 200),
    licensorUrl: webAddress('Licensor URL'),
  })
  .refine((r) => r.endsOn === null || r.endsOn >= r.startsOn, { path: ['endsOn'], message: 'The licence cannot end before it starts.' });

export type RightsInfo = z.input<typeof rightsInfoSchema>;
type Rights = z.output<typeof rightsInfoSchema>;

// ---------------------------------------------------------------------------------------------
// EXIF

/**
 * ASCII for an EXIF text tag as libvips will write it. libvips reads a string that ends in a
 * bracketed group, e.g. "Jane (Studio)", as its own "value (details)" form and drops the group; a
 * trailing " ()" is what it drops instead, so the value survives whole (checked by the delivery test).
 */
export function exifText(value: string): string {
  const ascii = toAsciiText(value);
  return ascii.endsWith(')') && ascii.includes(' (') ? `${ascii} ()` : ascii;
}

function exifRights(rights: Rights): Record<string, string> {
  const ifd0: Record<string, string> = {};
  const artist = exifText(rights.creator);
  const copyright = exifText(rights.copyrightNotice);
  // A name with no ASCII form at all is left out of EXIF; XMP carries it in full.
  if (/[A-Za-z0-9]/.test(artist)) ifd0.Artist = artist;
  if (/[A-Za-z0-9]/.test(copyright)) ifd0.Copyright = copyright;
  return ifd0;
}

// ---------------------------------------------------------------------------------------------
// XMP

/** Characters outside XML 1.0's Char production (control characters, lone surrogates, U+FFFE/F) are dropped. */
const NOT_XML_CHAR = /[^\t\n\u0020-\uD7FF\uE000-\uFFFD\u{10000}-\u{10FFFF}]/gu;

/** Text escaped for XML element content and attribute values. */
export function xmlEscape(value: string): string {
  return value
    .normalize('NFC')
    .replace(/\r\n?/g, '\n')
    .replace(NOT_XML_CHAR, '')
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&apos;');
}

/** Namespaces as TRADE-FACTS §4.1 gives them (RDF from the W3C RDF/XML syntax). */
const NS = {
  x: 'adobe:ns:meta/',
  rdf: 'http://www.w3.org/1999/02/22-rdf-syntax-ns#',
  dc: 'http://purl.org/dc/elements/1.1/',
  xmpRights: 'http://ns.adobe.com/xap/1.0/rights/',
  plus: 'http://ns.useplus.org/ldf/xmp/1.0/',
} as const;

/**
 * The XMP packet for a licensed file. dc:creator is an ordered list (rdf:Seq); dc:rights and
 * xmpRights:UsageTerms are language alternatives (rdf:Alt, x-default); plus:Licensee and
 * plus:Licensor are ordered lists of structures (PLUS License Data Format 1.2).
 */
export function rightsXmp(rights: Rights): string {
  const e = xmlEscape;
  const lines = [
    // The packet wrapper and its fixed id come from the XMP specification (Part 1, §7.3).
    '<?xpacket begin="\uFEFF" id="W5M0MpCehiHzreSzNTczkc9d"?>',
    `<x:xmpmeta xmlns:x="${NS.x}">`,
    ` <rdf:RDF xmlns:rdf="${NS.rdf}">`,
    `  <rdf:Description rdf:about="" xmlns:dc="${NS.dc}" xmlns:xmpRights="${NS.xmpRights}" xmlns:plus="${NS.plus}">`,
    `   <dc:creator><rdf:Seq><rdf:li>${e(rights.creator)}</rdf:li></rdf:Seq></dc:creator>`,
    `   <dc:rights><rdf:Alt><rdf:li xml:lang="x-default">${e(rights.copyrightNotice)}</rdf:li></rdf:Alt></dc:rights>`,
    '   <xmpRights:Marked>True</xmpRights:Marked>',
    `   <xmpRights:WebStatement>${e(rights.webStatement)}</xmpRights:WebStatement>`,
    `   <xmpRights:UsageTerms><rdf:Alt><rdf:li xml:lang="x-default">${e(rights.usageTerms)}</rdf:li></rdf:Alt></xmpRights:UsageTerms>`,
    `   <plus:LicenseID>${e(rights.licenceId)}</plus:LicenseID>`,
    `   <plus:LicenseStartDate>${rights.startsOn}</plus:LicenseStartDate>`,
    ...(rights.endsOn ? [`   <plus:LicenseEndDate>${rights.endsOn}</plus:LicenseEndDate>`] : []),
    `   <plus:Licensee><rdf:Seq><rdf:li rdf:parseType="Resource"><plus:LicenseeName>${e(rights.licenseeName)}</plus:LicenseeName></rdf:li></rdf:Seq></plus:Licensee>`,
    `   <plus:Licensor><rdf:Seq><rdf:li rdf:parseType="Resource"><plus:LicensorName>${e(rights.licensorName)}</plus:LicensorName><plus:LicensorURL>${e(rights.licensorUrl)}</plus:LicensorURL></rdf:li></rdf:Seq></plus:Licensor>`,
    '  </rdf:Description>',
    ' </rdf:RDF>',
    '</x:xmpmeta>',
    '<?xpacket end="w"?>',
  ];
  return lines.join('\n');
}

// ---------------------------------------------------------------------------------------------
// The file

export interface LicensedFileOptions {
  /** Largest original accepted, in pixels; defaults to the upload limit in the configuration. */
  pixelLimit?: number;
}

/**
 * A stream of the licensed JPEG made from `originalPath`. Throws at once when `rights` is invalid;
 * errors reading or decoding the original arrive as the stream's 'error' event.
 *
 * sharp reads the original from disk itself (libvips, not a JavaScript buffer). It cannot write a
 * JPEG piece by piece, though: a sharp output stream emits the encoded file as one chunk when it
 * is done, and a stream piped into sharp is gathered whole before decoding. Handing sharp the path
 * keeps at least the input side out of JavaScript memory.
 */
export function licensedFileStream(originalPath: string, rights: RightsInfo, options: LicensedFileOptions = {}): Sharp {
  const parsed = rightsInfoSchema.safeParse(rights);
  if (!parsed.success) {
    const issues = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ');
    throw new Error(`Invalid rights for the licensed file: ${issues}`);
  }
  const r = parsed.data;
  return sharp(originalPath, { limitInputPixels: options.pixelLimit ?? config().uploadMaxPixels })
    .rotate() // EXIF orientation applied to the pixels; the output says Orientation 1
    .flatten({ background: '#ffffff' }) // JPEG has no alpha: transparent areas become white, not black
    .withIccProfile('srgb') // converts from the original's embedded profile, then embeds sRGB
    .withExif({ IFD0: exifRights(r) })
    .withXmp(rightsXmp(r))
    .jpeg({ quality: 95, chromaSubsampling: '4:4:4' });
}
