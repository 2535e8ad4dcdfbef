/**
 * Certificates as A4 PDFs (pdf-lib): the licence certificate a buyer receives with a licensed file,
 * and the certificate of authenticity that goes with each limited-edition print. Each is one page;
 * long entries shrink the page evenly, and only licence terms too long for that go on overleaf.
 *
 * Type: titles are set in DM Serif Display, the shop's display face, from the TTF shipped in
 * node_modules. pdf-lib only embeds TrueType through the optional `@pdf-lib/fontkit` package, which
 * the app does not carry, so this module embeds the file itself as a simple TrueType font with
 * WinAnsiEncoding (PDF 32000-1:2008 §9.6.3, §9.8, §9.9: FontFile2). Body text uses the PDF standard
 * fonts Times-Roman and Helvetica, which need no embedding. Both take WinAnsi text only, so every
 * string passes through `toWinAnsiText` first; the exact Unicode title is kept in the document's
 * metadata, which is UTF-16.
 */
import fs from 'node:fs/promises';
import { createRequire } from 'node:module';
import {
  PDFDocument,
  PDFHexString,
  PDFName,
  PageSizes,
  StandardFonts,
  beginText,
  concatTransformationMatrix,
  endText,
  popGraphicsState,
  pushGraphicsState,
  rgb,
  setCharacterSpacing,
  setFillingRgbColor,
  setFontAndSize,
  setTextMatrix,
  showText,
  type PDFFont,
  type PDFPage,
  type PDFRef,
  type RGB,
} from 'pdf-lib';
import { z } from 'zod';
import {
  editionMark,
  formatCount,
  formatDimensions,
  formatLongDate,
  toIsoDate,
  toWinAnsiText,
  winAnsiCode,
  winAnsiToUnicode,
  wrapText,
} from '../certificate-text';

const require = createRequire(import.meta.url);
/** The display face for certificate titles (SIL Open Font License, which allows embedding). */
export const TITLE_FONT_FILE = require.resolve('@expo-google-fonts/dm-serif-display/400Regular/DMSerifDisplay_400Regular.ttf');

// =============================================================================================
// Data and validation

/** Longest licence terms accepted; they are printed in full. */
export const MAX_TERMS_LENGTH = 5000;

const requiredText = (label: string, max: number) =>
  z
    .string({ error: (issue) => (issue.input === undefined || issue.input === null ? `${label} is missing.` : `${label} must be text.`) })
    .trim()
    .min(1, `${label} is missing.`)
    .max(max, `${label} is longer than ${max} characters.`);

const optionalText = (label: string, max: number) =>
  z
    .string({ error: `${label} must be text.` })
    .trim()
    .max(max, `${label} is longer than ${max} characters.`)
    .nullish()
    .transform((value) => (value ? value : null));

/** Licence IDs and certificate serials: short, ASCII, printable as they are. */
const identifier = (label: string) =>
  requiredText(label, 64).regex(/^[A-Za-z0-9][A-Za-z0-9._-]*$/, `${label} may hold only letters, digits, dots, hyphens and underscores.`);

const year = (label: string) =>
  z
    .number({ error: `${label} is missing.` })
    .int(`${label} must be a whole year.`)
    .min(1826, `${label} is not a plausible year.`)
    .max(9999, `${label} is not a plausible year.`);

const positiveInt = (label: string) => z.number({ error: `${label} is missing.` }).int(`${label} must be a whole number.`).positive(`${label} must be at least 1.`);
const positiveLength = (label: string) => z.number({ error: `${label} is missing.` }).positive(`${label} must be greater than 0.`);

/** A calendar day, given as "YYYY-MM-DD" or a Date (read in UTC); parsed to "YYYY-MM-DD". */
const calendarDay = (label: string) =>
  z
    .union([z.date(), z.iso.date()], { error: `${label} must be a date (YYYY-MM-DD).` })
    .transform((value) => toIsoDate(value));

/** A moment, given as a Date or an ISO 8601 date-time with its offset. */
const moment = (label: string) =>
  z
    .union([z.date(), z.iso.datetime({ offset: true }), z.iso.date()], { error: `${label} must be a date and time.` })
    .transform((value) => (value instanceof Date ? value : new Date(value)));

/** The public check page: http(s) only, normalised to its ASCII form (punycode host, %-escapes). */
const webAddress = (label: string) =>
  z
    .url({ protocol: /^https?$/, error: `${label} must be an http(s) address.` })
    .max(500, `${label} is longer than 500 characters.`)
    .transform((value) => new URL(value).href);

export const licenceCertificateSchema = z
  .object({
    licenceId: identifier('Licence ID'),
    issuedAt: moment('Issue date'),
    shopName: requiredText('Shop name', 80),
    photographerName: requiredText('Photographer', 80),
    work: z.object(
      {
        title: requiredText('Work title', 120),
        year: year('Year of the work'),
        pixelWidth: positiveInt('Pixel width'),
        pixelHeight: positiveInt('Pixel height'),
      },
      { error: 'The work is missing.' },
    ),
    licensee: z.object(
      { name: requiredText('Licensee name', 120), organisation: optionalText('Licensee organisation', 120) },
      { error: 'The licensee is missing.' },
    ),
    tier: z.object(
      {
        name: requiredText('Licence tier', 80),
        use: z.enum(['editorial', 'commercial'], { error: 'Use must be editorial or commercial.' }),
        terms: requiredText('Licence terms', MAX_TERMS_LENGTH),
        media: requiredText('Permitted media', 200),
        /** Audience or print-run cap; null means none. */
        cap: positiveInt('Cap').nullable(),
        capUnit: optionalText('Cap unit', 40),
        territory: requiredText('Territory', 120),
      },
      { error: 'The licence tier is missing.' },
    ),
    startsOn: calendarDay('Start date'),
    /** Last day of the licence; null when it has no end. */
    endsOn: calendarDay('End date').nullable(),
    /** The amount paid, already formatted (e.g. "£120.00"). */
    price: requiredText('Price', 32),
    checkUrl: webAddress('Check page address'),
  })
  .refine((d) => d.endsOn === null || d.endsOn >= d.startsOn, { path: ['endsOn'], message: 'The licence cannot end before it starts.' });

export type LicenceCertificateData = z.input<typeof licenceCertificateSchema>;
type LicenceCertificate = z.output<typeof licenceCertificateSchema>;

/** Our own default wording; a shop can pass its own. */
export const DEFAULT_SIGNATURE_NOTE = 'Signed and numbered by the artist in pencil on the back of the print.';
export const DEFAULT_CARE_NOTE =
  'Keep the print out of direct sunlight and away from damp and heat. Frame it behind UV-filtering glazing on acid-free mount board, and handle it by the edges with clean cotton gloves.';

export const authenticityCertificateSchema = z
  .object({
    serial: identifier('Certificate serial'),
    issuedAt: moment('Issue date'),
    shopName: requiredText('Shop name', 80),
    /** The artist. */
    photographerName: requiredText('Artist', 80),
    work: z.object(
      {
        title: requiredText('Work title', 120),
        yearCaptured: year('Year of capture'),
        yearPrinted: year('Year printed'),
      },
      { error: 'The work is missing.' },
    ),
    edition: z.object(
      {
        /** This print's number n, 1 … N. */
        number: positiveInt('Print number'),
        /** N: fixed when the edition opened, never raised. */
        total: positiveInt('Edition size (N)'),
        /** Artist's proofs, outside N. */
        artistProofs: z
          .number({ error: "Number of artist's proofs is missing." })
          .int("Number of artist's proofs must be a whole number.")
          .min(0, "Number of artist's proofs cannot be negative."),
        /** Whether the edition is shared by every size of the work, or belongs to this size alone. */
        sharedAcrossSizes: z.boolean().default(false),
      },
      { error: 'The edition is missing.' },
    ),
    size: z.object(
      {
        /** e.g. "A3" or "11 × 14 in". */
        label: requiredText('Print size', 40),
        unit: z.enum(['mm', 'in'], { error: 'Size unit must be mm or in.' }),
        /** Sheet size. */
        width: positiveLength('Sheet width'),
        height: positiveLength('Sheet height'),
        /** Image area on the sheet, when it has a border. */
        imageWidth: positiveLength('Image width').nullish(),
        imageHeight: positiveLength('Image height').nullish(),
      },
      { error: 'The print size is missing.' },
    ),
    paper: z.object(
      {
        name: requiredText('Paper', 80),
        weightGsm: positiveInt('Paper weight').nullish(),
        /** Anything else worth stating, e.g. "100 % cotton, no optical brighteners". */
        note: optionalText('Paper note', 120),
      },
      { error: 'The paper is missing.' },
    ),
    /** Medium and process, e.g. "pigment inkjet print". */
    process: requiredText('Process (medium)', 100),
    inkSet: optionalText('Ink set', 80),
    printedBy: requiredText('Printer', 120),
    signatureNote: optionalText('Signature note', 160),
    careNote: optionalText('Care note', 400),
  })
  .superRefine((d, ctx) => {
    if (d.edition.number > d.edition.total) {
      ctx.addIssue({ code: 'custom', path: ['edition', 'number'], message: `Print number ${d.edition.number} is outside an edition of ${d.edition.total}.` });
    }
    if (d.work.yearPrinted < d.work.yearCaptured) {
      ctx.addIssue({ code: 'custom', path: ['work', 'yearPrinted'], message: 'The print cannot be made before the picture was taken.' });
    }
    const { imageWidth, imageHeight, width, height } = d.size;
    if ((imageWidth == null) !== (imageHeight == null)) {
      ctx.addIssue({ code: 'custom', path: ['size', 'imageWidth'], message: 'Give both image width and height, or neither.' });
    } else if (imageWidth != null && imageHeight != null && (imageWidth > width || imageHeight > height)) {
      ctx.addIssue({ code: 'custom', path: ['size', 'imageWidth'], message: 'The image area cannot be larger than the sheet.' });
    }
  });

export type AuthenticityCertificateData = z.input<typeof authenticityCertificateSchema>;
type AuthenticityCertificate = z.output<typeof authenticityCertificateSchema>;

/** Certificate data that failed validation; `issues` names each bad field by path. */
export class CertificateDataError extends Error {
  constructor(
    kind: string,
    readonly issues: { path: string; message: string }[],
  ) {
    super(`Invalid ${kind} data: ${issues.map((i) => (i.path ? `${i.path}: ${i.message}` : i.message)).join('; ')}`);
    this.name = 'CertificateDataError';
  }
}

function parseOrThrow<S extends z.ZodType>(schema: S, data: unknown, kind: string): z.output<S> {
  const parsed = schema.safeParse(data);
  if (!parsed.success) {
    throw new CertificateDataError(
      kind,
      parsed.error.issues.map((issue) => ({ path: issue.path.join('.'), message: issue.message })),
    );
  }
  return parsed.data;
}

// =============================================================================================
// Fonts

/** A font ready to draw WinAnsi text with. */
interface Face {
  readonly ref: PDFRef;
  /** Width of already-safe text at `size` pt. */
  width(text: string, size: number): number;
  encode(text: string): PDFHexString;
  /** Whether the font has a glyph for every character of `text`. */
  covers(text: string): boolean;
}

const standardMetricsCache = new Map<StandardFonts, Promise<PDFFont>>();

/** Metrics of a standard font (pdf-lib's copy of its AFM), read once through a scratch document that is never saved. */
function standardMetrics(name: StandardFonts): Promise<PDFFont> {
  let metrics = standardMetricsCache.get(name);
  if (!metrics) {
    metrics = PDFDocument.create({ updateMetadata: false }).then((scratch) => scratch.embedFont(name));
    standardMetricsCache.set(name, metrics);
  }
  return metrics;
}

/**
 * A standard Type 1 font (PDF 32000-1 §9.6.2.2) with WinAnsiEncoding and an explicit /Widths array.
 * The widths are optional for the standard 14 fonts, but viewers that substitute a system font
 * space glyphs by them, so lines keep the length they were wrapped to.
 */
async function standardFace(doc: PDFDocument, name: StandardFonts): Promise<Face> {
  const metrics = await standardMetrics(name);
  const supported = new Set(metrics.getCharacterSet());
  const widths: number[] = [];
  for (let code = 32; code <= 255; code++) {
    const unicode = winAnsiToUnicode(code);
    widths.push(unicode === undefined ? 0 : Math.round(metrics.widthOfTextAtSize(String.fromCodePoint(unicode), 1000)));
  }
  const ref = doc.context.register(
    doc.context.obj({ Type: 'Font', Subtype: 'Type1', BaseFont: name, FirstChar: 32, LastChar: 255, Widths: widths, Encoding: 'WinAnsiEncoding' }),
  );
  return {
    ref,
    // Sum of the /Widths, without the AFM's kerning, because the text is shown unkerned.
    width: (text, size) => [...text].reduce((sum, c) => sum + (widths[(winAnsiCode(c.codePointAt(0)!) ?? 0x3f) - 32] ?? 0), 0) * (size / 1000),
    encode: (text) => metrics.encodeText(text),
    covers: (text) => [...text].every((c) => supported.has(c.codePointAt(0)!)),
  };
}

interface TrueTypeFace {
  postScriptName: string;
  unitsPerEm: number;
  bbox: [number, number, number, number];
  ascent: number;
  descent: number;
  capHeight: number;
  italicAngle: number;
  weightClass: number;
  /** OpenType fsType: bit 1 set = restricted, may not be embedded. */
  fsType: number;
  glyphId(codePoint: number): number;
  advanceWidth(glyphId: number): number;
}

/**
 * Reads the few tables a PDF font descriptor and width array need from a TrueType file
 * (OpenType spec: table directory, head, hhea, hmtx, maxp, cmap format 4, OS/2, post, name).
 */
function readTrueType(bytes: Uint8Array): TrueTypeFace {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const fail = (why: string): never => {
    throw new Error(`Unreadable TrueType font: ${why}`);
  };
  const u16 = (at: number) => (at + 2 <= bytes.length ? view.getUint16(at) : fail('table out of range'));
  const i16 = (at: number) => (at + 2 <= bytes.length ? view.getInt16(at) : fail('table out of range'));
  const u32 = (at: number) => (at + 4 <= bytes.length ? view.getUint32(at) : fail('table out of range'));

  const version = u32(0);
  if (version !== 0x00010000 && version !== 0x74727565) fail('not TrueType outlines');
  const tables = new Map<string, number>();
  const count = u16(4);
  for (let i = 0; i < count; i++) {
    const at = 12 + i * 16;
    const tag = String.fromCharCode(bytes[at]!, bytes[at + 1]!, bytes[at + 2]!, bytes[at + 3]!);
    tables.set(tag, u32(at + 8));
  }
  const table = (tag: string) => tables.get(tag) ?? fail(`no ${tag} table`);

  const head = table('head');
  const unitsPerEm = u16(head + 18);
  if (unitsPerEm < 16) fail('bad unitsPerEm');
  const hhea = table('hhea');
  const metricsCount = u16(hhea + 34);
  const hmtx = table('hmtx');
  const numGlyphs = u16(table('maxp') + 4);
  const os2 = tables.get('OS/2');
  const post = tables.get('post');

  // cmap: the Windows Unicode BMP subtable (3,1), else a Unicode-platform one, in format 4.
  const cmap = table('cmap');
  let subtable: number | undefined;
  for (let i = 0, n = u16(cmap + 2); i < n; i++) {
    const rec = cmap + 4 + i * 8;
    const platform = u16(rec);
    const encoding = u16(rec + 2);
    const at = cmap + u32(rec + 4);
    if (u16(at) !== 4) continue;
    if (platform === 3 && encoding === 1) {
      subtable = at;
      break;
    }
    if (platform === 0) subtable ??= at;
  }
  if (subtable === undefined) fail('no Unicode cmap in format 4');
  const segX2 = u16(subtable! + 6);
  const ends = subtable! + 14;
  const starts = ends + segX2 + 2;
  const deltas = starts + segX2;
  const ranges = deltas + segX2;
  const glyphId = (cp: number): number => {
    if (cp > 0xffff) return 0;
    for (let s = 0; s < segX2; s += 2) {
      if (cp > u16(ends + s)) continue;
      const start = u16(starts + s);
      if (cp < start) return 0;
      const delta = u16(deltas + s);
      const rangeOffset = u16(ranges + s);
      let gid = cp;
      if (rangeOffset !== 0) {
        gid = u16(ranges + s + rangeOffset + 2 * (cp - start));
        if (gid === 0) return 0;
      }
      gid = (gid + delta) & 0xffff;
      return gid < numGlyphs ? gid : 0;
    }
    return 0;
  };
  const advanceWidth = (gid: number) => u16(hmtx + 4 * (Math.min(gid, metricsCount - 1)));

  // PostScript name (name ID 6), kept to the characters a PDF name needs no escaping for.
  let postScriptName = '';
  const name = tables.get('name');
  if (name !== undefined) {
    const storage = name + u16(name + 4);
    for (let i = 0, n = u16(name + 2); i < n && !postScriptName; i++) {
      const rec = name + 6 + i * 12;
      if (u16(rec + 6) !== 6) continue;
      const platform = u16(rec);
      const length = u16(rec + 8);
      const at = storage + u16(rec + 10);
      if (at + length > bytes.length) continue;
      let text = '';
      if (platform === 3 || platform === 0) for (let k = 0; k + 1 < length; k += 2) text += String.fromCharCode(u16(at + k));
      else for (let k = 0; k < length; k++) text += String.fromCharCode(bytes[at + k]!);
      postScriptName = text.replace(/[^A-Za-z0-9-]/g, '');
    }
  }

  const scale = (v: number) => Math.round((v * 1000) / unitsPerEm);
  return {
    postScriptName: postScriptName || 'EmbeddedTitleFace',
    unitsPerEm,
    bbox: [scale(i16(head + 36)), scale(i16(head + 38)), scale(i16(head + 40)), scale(i16(head + 42))],
    ascent: scale(i16(hhea + 4)),
    descent: scale(i16(hhea + 6)),
    capHeight: os2 !== undefined && u16(os2) >= 2 ? scale(i16(os2 + 88)) : scale(i16(hhea + 4)),
    italicAngle: post !== undefined ? view.getInt32(post + 4) / 65536 : 0,
    weightClass: os2 !== undefined ? u16(os2 + 4) : 400,
    fsType: os2 !== undefined ? u16(os2 + 8) : 0,
    glyphId,
    advanceWidth,
  };
}

let titleFontBytes: Promise<Uint8Array | null> | undefined;

/** The title font's bytes, read once; null when the file is missing (certificates then use Times-Roman). */
function loadTitleFontBytes(): Promise<Uint8Array | null> {
  titleFontBytes ??= fs.readFile(TITLE_FONT_FILE).then(
    (buffer) => new Uint8Array(buffer),
    () => null,
  );
  return titleFontBytes;
}

/**
 * Embeds a TrueType file whole as a simple font with WinAnsiEncoding (PDF 32000-1 §9.6.3): a
 * /TrueType font dictionary with /Widths for codes 32–255, a /FontDescriptor and the file as
 * /FontFile2. Returns null when the font forbids embedding (fsType bit 1) or cannot be read.
 */
function embedTrueType(doc: PDFDocument, bytes: Uint8Array, serif: boolean): Face | null {
  let face: TrueTypeFace;
  try {
    face = readTrueType(bytes);
  } catch {
    return null;
  }
  if (face.fsType & 0x0002) return null;
  const firstChar = 32;
  const lastChar = 255;
  const widths: number[] = [];
  const hasGlyph = new Set<number>();
  for (let code = firstChar; code <= lastChar; code++) {
    const unicode = winAnsiToUnicode(code);
    const gid = unicode === undefined ? 0 : face.glyphId(unicode);
    if (gid) hasGlyph.add(code);
    widths.push(gid ? Math.round((face.advanceWidth(gid) * 1000) / face.unitsPerEm) : 0);
  }
  const { context } = doc;
  const fontFile = context.register(context.flateStream(bytes, { Length1: bytes.length }));
  const descriptor = context.register(
    context.obj({
      Type: 'FontDescriptor',
      FontName: face.postScriptName,
      // Nonsymbolic (bit 6), plus Serif (bit 2) when asked.
      Flags: 32 | (serif ? 2 : 0),
      FontBBox: face.bbox,
      ItalicAngle: face.italicAngle,
      Ascent: face.ascent,
      Descent: face.descent,
      CapHeight: face.capHeight,
      // No TrueType table gives the vertical stem width; this is the usual estimate from the weight class.
      StemV: Math.round(50 + (face.weightClass / 65) ** 2),
      FontFile2: fontFile,
    }),
  );
  const ref = context.register(
    context.obj({
      Type: 'Font',
      Subtype: 'TrueType',
      BaseFont: face.postScriptName,
      FirstChar: firstChar,
      LastChar: lastChar,
      Widths: widths,
      FontDescriptor: descriptor,
      Encoding: 'WinAnsiEncoding',
    }),
  );
  const codesOf = (text: string) => [...text].map((c) => winAnsiCode(c.codePointAt(0)!) ?? 0x3f);
  return {
    ref,
    width: (text, size) => codesOf(text).reduce((sum, code) => sum + (widths[code - firstChar] ?? 0), 0) * (size / 1000),
    encode: (text) => PDFHexString.of(codesOf(text).map((c) => c.toString(16).padStart(2, '0')).join('').toUpperCase()),
    covers: (text) => [...text].every((c) => hasGlyph.has(winAnsiCode(c.codePointAt(0)!) ?? -1)),
  };
}

interface Faces {
  display: Face;
  serif: Face;
  serifItalic: Face;
  sans: Face;
  sansBold: Face;
}

async function loadFaces(doc: PDFDocument): Promise<Faces> {
  const [serif, serifItalic, sans, sansBold] = await Promise.all([
    standardFace(doc, StandardFonts.TimesRoman),
    standardFace(doc, StandardFonts.TimesRomanItalic),
    standardFace(doc, StandardFonts.Helvetica),
    standardFace(doc, StandardFonts.HelveticaBold),
  ]);
  const bytes = await loadTitleFontBytes();
  const display = (bytes && embedTrueType(doc, bytes, true)) ?? serif;
  return { display, serif, serifItalic, sans, sansBold };
}

// =============================================================================================
// Drawing

const A4 = PageSizes.A4; // [595.28, 841.89] pt: ISO 216 A4, 210 × 297 mm at 72 pt per inch
const MARGIN = 62;
const TOP = A4[1] - MARGIN;
const CONTENT_WIDTH = A4[0] - 2 * MARGIN;
const LABEL_WIDTH = 118;
/** Scales tried, largest first, when a certificate's content is too long for the page at full size. */
const SCALES = [1, 0.95, 0.9, 0.85, 0.8, 0.75, 0.7, 0.65, 0.6, 0.55, 0.5] as const;

/** The shop's palette (src/styles/global.css): ink, soft ink, rule and the ember accent. */
const INK = rgb(28 / 255, 26 / 255, 23 / 255);
const INK_SOFT = rgb(92 / 255, 86 / 255, 78 / 255);
const RULE = rgb(219 / 255, 211 / 255, 198 / 255);
const EMBER = rgb(168 / 255, 58 / 255, 28 / 255);

interface TextStyle {
  face: Face;
  size: number;
  color?: RGB;
  /** Extra space between characters, in pt. */
  tracking?: number;
}

/**
 * One A4 page, drawn with low-level operators so standard and embedded fonts go the same way.
 * Content is laid out at full size and the whole page scaled about its top-left margin corner by
 * `scale` (a `cm` transform), so a long certificate shrinks evenly instead of running off the page;
 * `width` and `bottom` are the content box in those layout units. A dry sheet only measures.
 */
class Sheet {
  readonly page: PDFPage | null;
  readonly scale: number;
  readonly width: number;
  /** Lowest baseline inside the bottom margin. */
  readonly bottom: number;
  /** Baseline cursor, moving down the page. */
  y = TOP;
  private readonly keys = new Map<Face, PDFName>();

  constructor(
    readonly doc: PDFDocument,
    readonly faces: Faces,
    options: { scale?: number; dry?: boolean } = {},
  ) {
    this.scale = options.scale ?? 1;
    this.width = CONTENT_WIDTH / this.scale;
    this.bottom = TOP - (TOP - MARGIN) / this.scale;
    this.page = options.dry ? null : doc.addPage(A4);
    if (this.page && this.scale !== 1) {
      const [e, f] = this.offset();
      this.page.pushOperators(pushGraphicsState(), concatTransformationMatrix(this.scale, 0, 0, this.scale, e, f));
    }
  }

  get right(): number {
    return MARGIN + this.width;
  }

  /** Translation part of the page transform: maps (MARGIN, TOP) to itself. */
  private offset(): [number, number] {
    return [MARGIN * (1 - this.scale), TOP * (1 - this.scale)];
  }

  /** Closes the page's transform. */
  finish(): void {
    if (this.page && this.scale !== 1) this.page.pushOperators(popGraphicsState());
  }

  private key(face: Face): PDFName {
    let key = this.keys.get(face);
    if (!key) {
      key = this.page!.node.newFontDictionary('F', face.ref);
      this.keys.set(face, key);
    }
    return key;
  }

  /** A face that has every glyph of `text`: the asked one, or Times-Roman. */
  faceFor(text: string, face: Face): Face {
    return face.covers(text) ? face : this.faces.serif;
  }

  measure(raw: string, style: TextStyle): number {
    const text = toWinAnsiText(raw);
    const face = this.faceFor(text, style.face);
    return face.width(text, style.size) + (style.tracking ?? 0) * Math.max(0, [...text].length - 1);
  }

  /**
   * Draws one line with its baseline at (x, y). Callers pass WinAnsi-safe text already; it is made
   * safe again here because a later step (upper-casing "µ" gives Greek "Μ") can leave the set.
   */
  draw(raw: string, x: number, y: number, style: TextStyle): void {
    const text = toWinAnsiText(raw);
    if (!text || !this.page) return;
    const face = this.faceFor(text, style.face);
    const color = style.color ?? INK;
    this.page.pushOperators(
      pushGraphicsState(),
      setFillingRgbColor(color.red, color.green, color.blue),
      beginText(),
      setFontAndSize(this.key(face), style.size),
      setCharacterSpacing(style.tracking ?? 0),
      setTextMatrix(1, 0, 0, 1, x, y),
      showText(face.encode(text)),
      endText(),
      popGraphicsState(),
    );
  }

  wrap(text: string, width: number, style: TextStyle): string[] {
    return wrapText(text, width, (s) => this.measure(s, style));
  }

  /** `text` cut to `width` with an ellipsis, for lines that must stay single. */
  fit(text: string, width: number, style: TextStyle): string {
    if (this.measure(text, style) <= width) return text;
    const chars = [...text];
    while (chars.length > 1 && this.measure(`${chars.join('').trimEnd()}…`, style) > width) chars.pop();
    return `${chars.join('').trimEnd()}…`;
  }

  /** Draws wrapped lines from the cursor down. */
  paragraph(text: string, style: TextStyle, options: { x?: number; width?: number; leading?: number } = {}): void {
    const leading = options.leading ?? style.size * 1.4;
    for (const line of this.wrap(text, options.width ?? this.width, style)) {
      this.y -= leading;
      this.draw(line, options.x ?? MARGIN, this.y, style);
    }
  }

  rule(y: number, color: RGB, thickness: number, x = MARGIN, width = this.width): void {
    this.page?.drawLine({ start: { x, y }, end: { x: x + width, y }, thickness, color });
  }

  /** A small, tracked, upper-case line, as used for the shop's name and section heads. */
  kicker(text: string, color = EMBER): void {
    const style: TextStyle = { face: this.faces.sansBold, size: 7.5, color, tracking: 1.2 };
    this.y -= 11;
    this.draw(this.fit(text.toUpperCase(), this.width, style), MARGIN, this.y, style);
  }

  /** Label / value rows with hairlines between them; values wrap in their column. */
  facts(rows: readonly (readonly [label: string, value: string])[]): void {
    const label: TextStyle = { face: this.faces.sans, size: 7.5, color: INK_SOFT, tracking: 0.6 };
    const value: TextStyle = { face: this.faces.serif, size: 10.5 };
    const leading = 14;
    const valueX = MARGIN + LABEL_WIDTH;
    this.rule(this.y, RULE, 0.5);
    for (const [name, text] of rows) {
      const lines = this.wrap(text, this.width - LABEL_WIDTH, value);
      const top = this.y;
      this.draw(name.toUpperCase(), MARGIN, top - 14.5, label);
      lines.forEach((line, i) => this.draw(line, valueX, top - 15 - i * leading, value));
      this.y = top - 15 - (lines.length - 1) * leading - 8;
      this.rule(this.y, RULE, 0.5);
    }
  }

  /** Makes a box clickable (a /Link annotation with a /URI action); annotations live in unscaled page space. */
  link(url: string, x: number, y: number, width: number, height: number): void {
    if (!this.page) return;
    const { context } = this.doc;
    const [e, f] = this.offset();
    const k = this.scale;
    const ascii = [...url].map((c) => c.charCodeAt(0).toString(16).padStart(2, '0')).join('');
    const annot = context.register(
      context.obj({
        Type: 'Annot',
        Subtype: 'Link',
        Rect: [e + k * x, f + k * y, e + k * (x + width), f + k * (y + height)],
        Border: [0, 0, 0],
        A: { Type: 'Action', S: 'URI', URI: PDFHexString.of(ascii) },
      }),
    );
    this.page.node.addAnnot(annot);
  }
}

/** Single-line fields: WinAnsi-safe, one line. */
const line = (text: string) => toWinAnsiText(text).trim();
/** Multi-paragraph fields: WinAnsi-safe, paragraph breaks kept. */
const paragraphs = (text: string) => toWinAnsiText(text, { keepNewlines: true }).replace(/\n{3,}/g, '\n\n').trim();

async function newDocument(meta: { title: string; subject: string; author: string; keywords: string[]; issuedAt: Date }) {
  const doc = await PDFDocument.create({ updateMetadata: false });
  doc.setTitle(meta.title, { showInWindowTitleBar: true });
  doc.setSubject(meta.subject);
  doc.setAuthor(meta.author);
  doc.setKeywords(meta.keywords);
  doc.setCreator('Stillmark');
  doc.setProducer('Stillmark certificates (pdf-lib)');
  doc.setCreationDate(meta.issuedAt);
  doc.setModificationDate(meta.issuedAt);
  doc.setLanguage('en-GB');
  return { doc, faces: await loadFaces(doc) };
}

/** Title block: the shop's name, the certificate's name in the display face, a subject line, an ember rule. */
function header(sheet: Sheet, shopName: string, heading: string, subject: string, byline: string): void {
  const { faces } = sheet;
  sheet.kicker(line(shopName));
  sheet.y -= 34;
  sheet.draw(heading, MARGIN, sheet.y, { face: faces.display, size: 28 });
  const subjectStyle: TextStyle = { face: faces.display, size: 17 };
  for (const l of sheet.wrap(subject, sheet.width, subjectStyle)) {
    sheet.y -= 24;
    sheet.draw(l, MARGIN, sheet.y, subjectStyle);
  }
  sheet.paragraph(byline, { face: faces.serifItalic, size: 11, color: INK_SOFT }, { leading: 16 });
  sheet.y -= 14;
  sheet.rule(sheet.y, EMBER, 1.25, MARGIN, 56);
  sheet.y -= 14;
}

// =============================================================================================
// Licence certificate

const TERMS_LEADING = 1.4;

function licenceTerm(d: LicenceCertificate): string {
  return d.endsOn === null
    ? `From ${formatLongDate(d.startsOn)}, with no end date`
    : `${formatLongDate(d.startsOn)} to ${formatLongDate(d.endsOn)}, both days included`;
}

/**
 * Everything on the licence page but the terms: header and facts from the top, the check address
 * and the personal-licence line from the bottom. Leaves the cursor where the terms start and returns
 * the top of the footer.
 */
function licenceFrame(sheet: Sheet, d: LicenceCertificate): number {
  const { faces } = sheet;
  header(sheet, d.shopName, 'Licence certificate', `“${line(d.work.title)}”`, line(`A photograph by ${d.photographerName}, ${d.work.year}`));
  const licensee = d.licensee.organisation ? `${d.licensee.name}, ${d.licensee.organisation}` : d.licensee.name;
  const limit = d.tier.cap === null ? 'No cap' : `Up to ${formatCount(d.tier.cap)}${d.tier.capUnit ? ` ${d.tier.capUnit}` : ''}`;
  sheet.facts(
    (
      [
        ['Licence', d.licenceId],
        ['Licensee', licensee],
        ['Work', `“${d.work.title}”, ${d.work.year}`],
        ['File', `${formatCount(d.work.pixelWidth)} × ${formatCount(d.work.pixelHeight)} pixels, full resolution`],
        ['Tier', d.tier.name],
        ['Use', d.tier.use === 'editorial' ? 'Editorial' : 'Commercial'],
        ['Media', d.tier.media],
        ['Limit', limit],
        ['Territory', d.tier.territory],
        ['Term', licenceTerm(d)],
        ['Price paid', d.price],
        ['Licensor', `${d.photographerName}, through ${d.shopName}`],
        ['Issued', formatLongDate(d.issuedAt)],
      ] as const
    ).map(([label, value]) => [label, line(value)] as const),
  );

  const note: TextStyle = { face: faces.serif, size: 9.5 };
  const small: TextStyle = { face: faces.sans, size: 8, color: INK_SOFT };
  const urlStyle: TextStyle = { face: faces.sans, size: 9, color: EMBER };
  const personal = sheet.wrap(
    line(
      `This licence is personal to ${d.licensee.name}. It cannot be transferred, sold, lent or sub-licensed to anyone else; anyone else who wants to use the picture needs a licence of their own.`,
    ),
    sheet.width,
    note,
  );
  const urlLines = sheet.wrap(d.checkUrl, sheet.width - 4, urlStyle);
  const issuer = sheet.wrap(line(`Issued by ${d.shopName} for ${d.photographerName} on ${formatLongDate(d.issuedAt)}.`), sheet.width, small);
  const footerTop = sheet.bottom + 26 + urlLines.length * 13 + 10 + personal.length * 13 + 2 + (issuer.length - 1) * 11;
  let y = footerTop;
  sheet.rule(y, RULE, 0.5);
  y -= 14;
  sheet.draw('CHECK THIS LICENCE', MARGIN, y, { face: faces.sansBold, size: 7.5, color: INK_SOFT, tracking: 1.2 });
  y -= 12;
  for (const l of urlLines) {
    sheet.draw(l, MARGIN, y, urlStyle);
    sheet.link(d.checkUrl, MARGIN, y - 3, sheet.measure(l, urlStyle), 13);
    y -= 13;
  }
  y -= 10;
  for (const l of personal) {
    sheet.draw(l, MARGIN, y, note);
    y -= 13;
  }
  y -= 2;
  for (const l of issuer) {
    sheet.draw(l, MARGIN, y, small);
    y -= 11;
  }

  sheet.y -= 18;
  sheet.kicker('Terms of use');
  sheet.y -= 2;
  return footerTop;
}

/**
 * The licence certificate: the facts of the licence, its terms in full, the check address and the
 * personal-licence line, on one A4 page. Terms are set at 10 pt, down to 8 pt if they need it, and
 * the page scales down evenly if still short of room; terms that fit none of these (the schema
 * allows up to 5,000 characters) go on overleaf rather than being cut.
 */
export async function licenceCertificatePdf(data: LicenceCertificateData): Promise<Uint8Array> {
  const d = parseOrThrow(licenceCertificateSchema, data, 'licence certificate');
  const { doc, faces } = await newDocument({
    title: `Licence certificate ${d.licenceId}`,
    subject: `Licence ${d.licenceId} for “${d.work.title}” (${d.work.year}) by ${d.photographerName}, to ${d.licensee.name}`,
    author: d.shopName,
    keywords: [d.licenceId, d.work.title, d.licensee.name, d.tier.name],
    issuedAt: d.issuedAt,
  });
  const terms = paragraphs(d.tier.terms);
  const termLines = (sheet: Sheet, size: number) => sheet.wrap(terms, sheet.width, { face: faces.serif, size });

  // Largest scale, then largest terms size, that fits everything on one page.
  let choice: { scale: number; size: number } | undefined;
  let fallback: { scale: number; size: number } | undefined;
  for (const scale of SCALES) {
    const dry = new Sheet(doc, faces, { scale, dry: true });
    const footerTop = licenceFrame(dry, d);
    const room = dry.y - footerTop - 12;
    // Terms stay at 6.4 pt or larger on paper (8 pt at scale 0.8); smaller than that, they go overleaf.
    for (let size = 10; size >= 8 && scale >= 0.8 && !choice; size -= 0.5) {
      if (termLines(dry, size).length * size * TERMS_LEADING <= room) choice = { scale, size };
    }
    if (choice) break;
    // Failing that, the largest scale that leaves room for a few lines before going overleaf.
    if (!fallback && room >= 4 * 8 * TERMS_LEADING) fallback = { scale, size: 8 };
  }
  const { scale, size } = choice ?? fallback ?? { scale: SCALES[SCALES.length - 1], size: 8 };

  const sheet = new Sheet(doc, faces, { scale });
  const footerTop = licenceFrame(sheet, d);
  const style: TextStyle = { face: faces.serif, size };
  const leading = size * TERMS_LEADING;
  const lines = termLines(sheet, size);
  const fitting = Math.max(0, Math.floor((sheet.y - footerTop - 12) / leading));
  for (const l of lines.slice(0, fitting)) {
    sheet.y -= leading;
    sheet.draw(l, MARGIN, sheet.y, style);
  }
  sheet.finish();

  let rest = lines.slice(fitting);
  while (rest.length > 0) {
    const more = new Sheet(doc, faces, { scale });
    more.kicker(line(d.shopName));
    more.y -= 16;
    more.draw(`Licence ${d.licenceId}: terms of use, continued`, MARGIN, more.y, { face: faces.sans, size: 9, color: INK_SOFT });
    more.y -= 4;
    const room = Math.max(1, Math.floor((more.y - more.bottom) / leading));
    for (const l of rest.slice(0, room)) {
      more.y -= leading;
      more.draw(l, MARGIN, more.y, style);
    }
    more.finish();
    rest = rest.slice(room);
  }
  return doc.save();
}

// =============================================================================================
// Certificate of authenticity

/** Space kept above the bottom margin for the signature and date lines. */
const SIGNATURE_BLOCK = 78;

/** The whole certificate of authenticity on one sheet; returns the lowest baseline the content reached. */
function authenticityPage(sheet: Sheet, d: AuthenticityCertificate): number {
  const { faces } = sheet;
  const { number, total, artistProofs, sharedAcrossSizes } = d.edition;
  const mark = editionMark(number, total);
  header(sheet, d.shopName, 'Certificate of authenticity', `“${line(d.work.title)}”`, line(`A photograph by ${d.photographerName}`));

  // The edition mark, large, with what it means beside it.
  const proofs = artistProofs === 1 ? "1 artist's proof" : `${artistProofs} artist's proofs`;
  const markStyle: TextStyle = { face: faces.display, size: 40, color: EMBER };
  sheet.y -= 40;
  sheet.draw(mark, MARGIN, sheet.y, markStyle);
  const besideX = MARGIN + Math.max(sheet.measure(mark, markStyle) + 20, 110);
  const besideStyle: TextStyle = { face: faces.serif, size: 10.5 };
  const beside = sheet.wrap(`Print number ${number} of a limited edition of ${total}, plus ${proofs} outside the count.`, sheet.right - besideX, besideStyle);
  beside.forEach((l, i) => sheet.draw(l, besideX, sheet.y + 14 - i * 14, besideStyle));
  sheet.y -= Math.max(14, (beside.length - 1) * 14) + 8;

  const size = d.size;
  const sheetSize = formatDimensions(size.width, size.height, size.unit);
  const imageSize = size.imageWidth != null && size.imageHeight != null ? formatDimensions(size.imageWidth, size.imageHeight, size.unit) : null;
  const paper = [d.paper.name, d.paper.weightGsm ? `${d.paper.weightGsm} gsm` : null, d.paper.note].filter(Boolean).join(', ');
  sheet.facts(
    (
      [
        ['Artist', d.photographerName],
        ['Title', `“${d.work.title}”`],
        ['Captured', String(d.work.yearCaptured)],
        ['Printed', String(d.work.yearPrinted)],
        ['Edition', `${mark}, limited to ${total}; ${proofs} outside the edition`],
        ['Edition covers', sharedAcrossSizes ? 'Every size of this work together' : `This size (${size.label}) only`],
        ['Size', `${size.label}: sheet ${sheetSize}${imageSize ? `; image ${imageSize}` : ''}`],
        ['Paper', paper],
        ['Process', d.inkSet ? `${d.process}, ${d.inkSet}` : d.process],
        ['Printed by', d.printedBy],
        ['Signature', d.signatureNote ?? DEFAULT_SIGNATURE_NOTE],
        ['Serial', d.serial],
        ['Issued', formatLongDate(d.issuedAt)],
      ] as const
    ).map(([label, value]) => [label, line(value)] as const),
  );

  const body: TextStyle = { face: faces.serif, size: 10 };
  const scope = sharedAcrossSizes ? 'in any size' : `at ${size.label}`;
  sheet.y -= 12;
  sheet.paragraph(
    line(
      `No further prints of this edition will be made ${scope}: it is limited to the ${total} numbered prints and the ${proofs} declared here, and the number will never be raised.`,
    ),
    body,
  );
  sheet.y -= 14;
  sheet.kicker('Care', INK_SOFT);
  sheet.paragraph(line(d.careNote ?? DEFAULT_CARE_NOTE), { ...body, size: 9.5, color: INK_SOFT });
  const lowest = sheet.y;

  // Signature and date lines, above the bottom margin; a small issuer line below it.
  const baseline = sheet.bottom + 44;
  const label: TextStyle = { face: faces.sans, size: 7.5, color: INK_SOFT, tracking: 0.6 };
  const signatureWidth = 230;
  sheet.rule(baseline, INK, 0.6, MARGIN, signatureWidth);
  sheet.draw("ARTIST'S SIGNATURE", MARGIN, baseline - 12, label);
  const nameStyle: TextStyle = { face: faces.serif, size: 9, color: INK_SOFT };
  sheet.draw(sheet.fit(line(d.photographerName), signatureWidth, nameStyle), MARGIN, baseline - 24, nameStyle);
  const dateX = MARGIN + signatureWidth + 60;
  sheet.rule(baseline, INK, 0.6, dateX, sheet.right - dateX);
  sheet.draw('DATE', dateX, baseline - 12, label);
  const footStyle: TextStyle = { face: faces.sans, size: 7.5, color: INK_SOFT };
  sheet.draw(sheet.fit(line(`${d.shopName} · certificate ${d.serial}`), sheet.width, footStyle), MARGIN, sheet.bottom - 18, footStyle);
  return lowest;
}

/**
 * The certificate of authenticity for one print of a limited edition, on one A4 page: artist,
 * title, years of capture and printing, n/N and the artist's proofs, size in both units, paper,
 * process, printer, signature method, serial, issue date, the no-more-prints statement, care, and
 * lines for the artist's signature and date. Long entries scale the page down evenly.
 */
export async function authenticityCertificatePdf(data: AuthenticityCertificateData): Promise<Uint8Array> {
  const d = parseOrThrow(authenticityCertificateSchema, data, 'certificate of authenticity');
  const mark = editionMark(d.edition.number, d.edition.total);
  const { doc, faces } = await newDocument({
    title: `Certificate of authenticity ${d.serial}`,
    subject: `“${d.work.title}” by ${d.photographerName}, print ${mark}`,
    author: d.shopName,
    keywords: [d.serial, d.work.title, mark],
    issuedAt: d.issuedAt,
  });
  const scale =
    SCALES.find((k) => {
      const dry = new Sheet(doc, faces, { scale: k, dry: true });
      return authenticityPage(dry, d) >= dry.bottom + SIGNATURE_BLOCK;
    }) ?? SCALES[SCALES.length - 1];
  const sheet = new Sheet(doc, faces, { scale });
  authenticityPage(sheet, d);
  sheet.finish();
  return doc.save();
}

// =============================================================================================
// Shared with the lab job sheet (lab-sheet.ts), so every PDF the shop makes is set the same way.

export { newDocument as newShopDocument, header as shopHeader, line as pdfLine, Sheet as ShopSheet, MARGIN as SHEET_MARGIN, SCALES as SHEET_SCALES, INK, INK_SOFT, RULE, EMBER };
export type { TextStyle, Faces };
