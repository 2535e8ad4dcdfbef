import fs from 'node:fs';
import zlib from 'node:zlib';
import {
  PDFArray,
  PDFDict,
  PDFDocument,
  PDFHexString,
  PDFName,
  PDFNumber,
  PDFRawStream,
  PDFString,
  StandardFonts,
  type PDFPage,
} from 'pdf-lib';
import { describe, expect, it } from 'vitest';
import {
  CertificateDataError,
  TITLE_FONT_FILE,
  authenticityCertificatePdf,
  licenceCertificatePdf,
  type AuthenticityCertificateData,
  type LicenceCertificateData,
} from '~/lib/server/certificates';
import { formatDimensions, toAsciiText, toWinAnsiText, winAnsiCodePoints, wrapText } from '~/lib/certificate-text';

// Invented sample data (never an expected value on its own; expectations restate it).
const licence: LicenceCertificateData = {
  licenceId: 'SMK-L-7Q4M-2KX9',
  issuedAt: new Date('2025-03-14T10:30:00Z'),
  shopName: 'Stillmark Studio',
  photographerName: 'Ines Marlow',
  work: { title: 'Étude — Pear & Knife', year: 2024, pixelWidth: 6000, pixelHeight: 4000 },
  licensee: { name: 'Ana Ferreira', organisation: 'Quarterly Table Magazine' },
  tier: {
    name: 'Editorial · Print run',
    use: 'editorial',
    terms:
      'You may print the picture inside one editorial publication, up to the print run below, plus its digital edition. Not on the cover unless agreed, not in advertising, and no endorsement implied.\n\nCredit the photographer beside the picture or in the credits.',
    media: 'Print publication, inside pages',
    cap: 50000,
    capUnit: 'copies',
    territory: 'Worldwide',
  },
  startsOn: '2025-03-14',
  endsOn: '2030-03-13',
  price: '£180.00',
  checkUrl: 'https://shop.example/licences/SMK-L-7Q4M-2KX9',
};

const print: AuthenticityCertificateData = {
  serial: 'SMK-C-000123',
  issuedAt: '2025-04-02T09:00:00Z',
  shopName: 'Stillmark Studio',
  photographerName: 'Ines Marlow',
  work: { title: 'Quince on Slate', yearCaptured: 2023, yearPrinted: 2025 },
  edition: { number: 7, total: 25, artistProofs: 2 },
  size: { label: 'A3', unit: 'mm', width: 297, height: 420, imageWidth: 257, imageHeight: 380 },
  paper: { name: 'Cotton rag matte', weightGsm: 310, note: 'no optical brighteners' },
  process: 'Pigment inkjet print',
  inkSet: 'eleven pigment inks',
  printedBy: 'A fine-art lab, under the artist’s supervision',
};

// ---------------------------------------------------------------------------------------------
// An independent reader: inflate each page's content streams (node:zlib) and collect the strings
// shown by Tj / TJ. Bytes are read as WinAnsiEncoding, PDF 32000-1:2008 Annex D.2: Latin-1, except
// the 0x80–0x9F row, of which only the codes these certificates use are listed here.

const WINANSI_ROW_8_9: Record<number, string> = { 0x80: '€', 0x85: '…', 0x91: '‘', 0x92: '’', 0x93: '“', 0x94: '”', 0x95: '•', 0x96: '–', 0x97: '—' };
const decodeWinAnsi = (bytes: number[]) => bytes.map((b) => WINANSI_ROW_8_9[b] ?? String.fromCharCode(b)).join('');

function literalBytes(body: string): number[] {
  const out: number[] = [];
  for (let i = 0; i < body.length; i++) {
    const c = body[i]!;
    if (c !== '\\') {
      out.push(c.charCodeAt(0));
      continue;
    }
    const next = body[++i]!;
    const escapes: Record<string, number> = { n: 10, r: 13, t: 9, b: 8, f: 12, '(': 40, ')': 41, '\\': 92 };
    if (next in escapes) out.push(escapes[next]!);
    else if (/[0-7]/.test(next)) {
      const octal = /^[0-7]{1,3}/.exec(body.slice(i))![0];
      out.push(parseInt(octal, 8));
      i += octal.length - 1;
    }
  }
  return out;
}

function contentStreams(page: PDFPage): Buffer[] {
  const contents = page.node.Contents();
  const streams = contents instanceof PDFArray ? contents.asArray().map((ref) => page.doc.context.lookup(ref)) : [contents];
  return streams.map((stream) => {
    if (!(stream instanceof PDFRawStream)) throw new Error('expected a raw content stream');
    const filter = stream.dict.get(PDFName.of('Filter'));
    const raw = Buffer.from(stream.getContents());
    return filter === PDFName.of('FlateDecode') ? zlib.inflateSync(raw) : raw;
  });
}

/** Every string shown on the page, in drawing order. */
function shownStrings(page: PDFPage): string[] {
  const strings: string[] = [];
  for (const content of contentStreams(page)) {
    const source = content.toString('latin1');
    const shown = /<([0-9A-Fa-f\s]*)>\s*Tj|\(((?:\\.|[^\\)])*)\)\s*Tj|\[((?:[^\]\\]|\\.)*)\]\s*TJ/g;
    for (const match of source.matchAll(shown)) {
      if (match[1] !== undefined) {
        const hex = match[1].replace(/\s/g, '');
        strings.push(decodeWinAnsi(hex.match(/../g)?.map((h) => parseInt(h, 16)) ?? []));
      } else if (match[2] !== undefined) strings.push(decodeWinAnsi(literalBytes(match[2])));
      else strings.push(''); // TJ arrays are not written by this app
    }
  }
  return strings;
}

async function readPdf(bytes: Uint8Array) {
  expect(Buffer.from(bytes.subarray(0, 5)).toString('latin1')).toBe('%PDF-');
  const doc = await PDFDocument.load(bytes);
  const pages = doc.getPages();
  const text = pages.map((p) => shownStrings(p).join('\n')).join('\n');
  return { doc, pages, text, flat: text.replace(/\s+/g, ' ') };
}

/** Font dictionaries a page uses, resolved. */
function pageFonts(page: PDFPage): PDFDict[] {
  const resources = page.node.Resources();
  const fonts = resources?.lookup(PDFName.of('Font'), PDFDict);
  if (!fonts) return [];
  return fonts.keys().map((key) => fonts.lookup(key, PDFDict));
}

// ISO 216: A4 is 210 × 297 mm; PDF user space is 72 units per inch (PDF 32000-1 §8.3.2.3); 1 in = 25.4 mm.
const A4_WIDTH_PT = (210 / 25.4) * 72; // 595.28
const A4_HEIGHT_PT = (297 / 25.4) * 72; // 841.89

describe('licence certificate', () => {
  it('is a one-page A4 PDF with every fact of the licence, the terms in full and the check address', async () => {
    const { doc, pages, text, flat } = await readPdf(await licenceCertificatePdf(licence));
    expect(pages).toHaveLength(1);
    const { width, height } = pages[0]!.getSize();
    expect(width).toBeCloseTo(A4_WIDTH_PT, 2);
    expect(height).toBeCloseTo(A4_HEIGHT_PT, 2);
    expect(width).toBeCloseTo(595.28, 2);
    expect(height).toBeCloseTo(841.89, 2);

    expect(text).toContain('Licence certificate');
    expect(text).toContain('SMK-L-7Q4M-2KX9');
    expect(text).toContain('“Étude — Pear & Knife”');
    expect(text).toContain('Ana Ferreira, Quarterly Table Magazine');
    expect(text).toContain('6,000 × 4,000 pixels');
    expect(text).toContain('Editorial · Print run');
    expect(text).toContain('Editorial');
    expect(text).toContain('Print publication, inside pages');
    expect(text).toContain('Up to 50,000 copies');
    expect(text).toContain('Worldwide');
    expect(text).toContain('14 March 2025 to 13 March 2030');
    expect(text).toContain('£180.00');
    expect(text).toContain('Ines Marlow');
    expect(text).toContain('https://shop.example/licences/SMK-L-7Q4M-2KX9');
    // The terms in full, whatever the line breaks.
    expect(flat).toContain((licence.tier.terms as string).replace(/\s+/g, ' '));
    // Personal to the licensee, not transferable.
    expect(flat).toMatch(/personal to Ana Ferreira\. It cannot be transferred, sold, lent or sub-licensed/);

    // The check address is also a link.
    const annots = pages[0]!.node.Annots();
    const link = doc.context.lookup(annots!.get(0), PDFDict);
    const action = link.lookup(PDFName.of('A'), PDFDict);
    const uri = action.lookup(PDFName.of('URI'));
    const uriText = uri instanceof PDFHexString || uri instanceof PDFString ? uri.decodeText() : '';
    expect(uriText).toBe('https://shop.example/licences/SMK-L-7Q4M-2KX9');

    // Document metadata keeps the exact Unicode title.
    expect(doc.getTitle()).toBe('Licence certificate SMK-L-7Q4M-2KX9');
    expect(doc.getSubject()).toContain('Étude — Pear & Knife');
    expect(doc.getKeywords()).toContain('SMK-L-7Q4M-2KX9');
  });

  it('says when a licence has no end date and when a tier has no cap', async () => {
    const { text } = await readPdf(
      await licenceCertificatePdf({ ...licence, endsOn: null, tier: { ...licence.tier, cap: null, capUnit: null }, licensee: { name: 'Ana Ferreira' } }),
    );
    expect(text).toContain('From 14 March 2025, with no end date');
    expect(text).toContain('No cap');
    expect(text).not.toContain('Quarterly Table Magazine');
  });

  it('sets the title in the embedded DM Serif Display TTF and body text in the standard fonts', async () => {
    const { pages } = await readPdf(await licenceCertificatePdf(licence));
    const fonts = pageFonts(pages[0]!);
    const baseFonts = fonts.map((f) => f.get(PDFName.of('BaseFont'))?.toString());
    expect(baseFonts).toEqual(expect.arrayContaining([`/${StandardFonts.TimesRoman}`, `/${StandardFonts.Helvetica}`]));
    const trueType = fonts.find((f) => f.get(PDFName.of('Subtype')) === PDFName.of('TrueType'));
    expect(trueType?.get(PDFName.of('BaseFont'))?.toString()).toMatch(/^\/DMSerifDisplay/);
    expect(trueType?.get(PDFName.of('Encoding'))).toBe(PDFName.of('WinAnsiEncoding'));
    const descriptor = trueType!.lookup(PDFName.of('FontDescriptor'), PDFDict);
    const file = descriptor.lookup(PDFName.of('FontFile2'));
    expect(file).toBeInstanceOf(PDFRawStream);
    // Length1 is the font program's length before compression (PDF 32000-1 §9.9, embedded font streams): the whole TTF.
    const length1 = (file as PDFRawStream).dict.lookup(PDFName.of('Length1'), PDFNumber).asNumber();
    expect(length1).toBe(fs.statSync(TITLE_FONT_FILE).size);
    const ttf = zlib.inflateSync(Buffer.from((file as PDFRawStream).getContents()));
    expect(ttf.equals(fs.readFileSync(TITLE_FONT_FILE))).toBe(true);
  });

  it('is the same file byte for byte when made twice from the same data', async () => {
    const a = await licenceCertificatePdf(licence);
    const b = await licenceCertificatePdf(licence);
    expect(Buffer.from(a).equals(Buffer.from(b))).toBe(true);
  });

  it('prints terms as long as the Studio allows (4,000 characters) in full on the one page', async () => {
    const sentence = 'The picture may appear once per issue, at any size, with the credit beside it. ';
    const terms = sentence.repeat(50).slice(0, 4000).trim();
    const { pages, flat } = await readPdf(await licenceCertificatePdf({ ...licence, tier: { ...licence.tier, terms } }));
    expect(pages).toHaveLength(1);
    expect(flat).toContain(terms);
  });

  it('carries terms that cannot fit beside very long entries overleaf, losing nothing', async () => {
    const long = (n: number) => 'Wide words '.repeat(Math.ceil(n / 11)).slice(0, n).trim();
    const terms = 'Each printed copy counts toward the cap, whether sold or given away. '.repeat(80).slice(0, 4950).trim();
    const { pages } = await readPdf(
      await licenceCertificatePdf({
        ...licence,
        shopName: long(80),
        photographerName: long(80),
        work: { ...licence.work, title: long(120) },
        licensee: { name: long(120), organisation: long(120) },
        tier: { ...licence.tier, name: long(80), media: long(200), territory: long(120), terms },
      }),
    );
    expect(pages).toHaveLength(2);
    const [first, second] = pages.map((p) => shownStrings(p).join(' ').replace(/\s+/g, ' '));
    // Page one keeps its footer (check address, personal-licence line); the terms go on overleaf.
    const onFirst = /TERMS OF USE (.*)$/.exec(first!)![1]!; // the terms are drawn last
    const onSecond = /Licence SMK-L-7Q4M-2KX9: terms of use, continued (.*)$/.exec(second!)![1]!;
    expect(`${onFirst} ${onSecond}`).toBe(terms);
    expect(first).toContain('It cannot be transferred');
    for (const page of pages) {
      expect(page.getSize().width).toBeCloseTo(A4_WIDTH_PT, 2);
      expect(page.getSize().height).toBeCloseTo(A4_HEIGHT_PT, 2);
    }
  });

  it('refuses incomplete or inconsistent data with a clear message', async () => {
    const { licenceId: _omit, ...noId } = licence;
    await expect(licenceCertificatePdf(noId as LicenceCertificateData)).rejects.toThrow(/licenceId: Licence ID is missing/);
    await expect(licenceCertificatePdf({ ...licence, endsOn: '2025-03-01' })).rejects.toThrow(/endsOn: The licence cannot end before it starts/);
    await expect(licenceCertificatePdf({ ...licence, startsOn: '2025-02-30' })).rejects.toThrow(/startsOn/);
    await expect(licenceCertificatePdf({ ...licence, checkUrl: 'javascript:alert(1)' })).rejects.toThrow(/checkUrl: Check page address must be an http\(s\) address/);
    await expect(licenceCertificatePdf({ ...licence, tier: { ...licence.tier, terms: '   ' } })).rejects.toThrow(/tier\.terms: Licence terms is missing/);
    await expect(licenceCertificatePdf({ ...licence, licensee: { name: '' } })).rejects.toThrow(CertificateDataError);
  });
});

describe('certificate of authenticity', () => {
  it('is a one-page A4 PDF with every disclosure the certificate needs (TRADE-FACTS §8.2)', async () => {
    const { pages, text, flat, doc } = await readPdf(await authenticityCertificatePdf(print));
    expect(pages).toHaveLength(1);
    const { width, height } = pages[0]!.getSize();
    expect(width).toBeCloseTo(A4_WIDTH_PT, 2);
    expect(height).toBeCloseTo(A4_HEIGHT_PT, 2);

    expect(text).toContain('Certificate of authenticity');
    // n/N, and the edition drawn as its own mark
    expect(shownStrings(pages[0]!)).toContain('7/25');
    expect(text).toContain('Ines Marlow'); // artist
    expect(text).toContain('“Quince on Slate”'); // title
    expect(text).toContain('2023'); // year of capture
    expect(text).toContain('2025'); // year printed
    expect(text).toContain("2 artist's proofs outside the edition"); // proofs, outside N
    expect(text).toContain('This size (A3) only'); // whether sizes share the edition
    // Exact sizes in both units: 297 mm / 25.4 = 11.69 in; 420 mm / 25.4 = 16.54 in (1 in = 25.4 mm)
    expect(flat).toContain('A3: sheet 297 × 420 mm (11.69 × 16.54 in); image 257 × 380 mm (10.12 × 14.96 in)');
    expect(text).toContain('Cotton rag matte, 310 gsm, no optical brighteners'); // paper
    expect(text).toContain('Pigment inkjet print, eleven pigment inks'); // process and ink set
    expect(text).toContain('A fine-art lab, under the artist’s supervision'); // printer
    expect(text).toContain('SMK-C-000123'); // serial
    expect(text).toContain('2 April 2025'); // issue date
    expect(flat).toContain('Signed and numbered by the artist in pencil'); // signature method
    expect(text).toContain("ARTIST'S SIGNATURE"); // signature line
    expect(flat).toMatch(/Keep the print out of direct sunlight/); // care
    expect(flat).toContain('No further prints of this edition will be made at A3: it is limited to the 25 numbered prints and the 2 artist\'s proofs declared here');
    expect(doc.getKeywords()).toContain('7/25');
  });

  it('keeps every entry on the one page even when each is as long as allowed', async () => {
    const long = (n: number) => 'Wide words '.repeat(Math.ceil(n / 11)).slice(0, n).trim();
    const { pages, flat } = await readPdf(
      await authenticityCertificatePdf({
        ...print,
        shopName: long(80),
        photographerName: long(80),
        work: { ...print.work, title: long(120) },
        edition: { number: 999, total: 1000, artistProofs: 100 },
        size: { ...print.size, label: long(40) },
        paper: { name: long(80), weightGsm: 310, note: long(120) },
        process: long(100),
        inkSet: long(80),
        printedBy: long(120),
        signatureNote: long(160),
        careNote: long(400),
      }),
    );
    expect(pages).toHaveLength(1);
    expect(shownStrings(pages[0]!)).toContain('999/1000');
    expect(flat).toContain('SMK-C-000123');
    expect(flat).toContain("ARTIST'S SIGNATURE");
  });

  it('says so when the edition is shared across sizes', async () => {
    const { flat } = await readPdf(await authenticityCertificatePdf({ ...print, edition: { ...print.edition, sharedAcrossSizes: true } }));
    expect(flat).toContain('Every size of this work together');
    expect(flat).toContain('No further prints of this edition will be made in any size');
  });

  it('refuses a certificate without edition size or process, or with a number outside 1…N (TRADE-FACTS §8 check values)', async () => {
    const { total: _n, ...noTotal } = print.edition;
    await expect(authenticityCertificatePdf({ ...print, edition: noTotal as typeof print.edition })).rejects.toThrow(/edition\.total: Edition size \(N\) is missing/);
    const { process: _p, ...noProcess } = print;
    await expect(authenticityCertificatePdf(noProcess as AuthenticityCertificateData)).rejects.toThrow(/process: Process \(medium\) is missing/);
    await expect(authenticityCertificatePdf({ ...print, process: '  ' })).rejects.toThrow(/Process \(medium\) is missing/);
    await expect(authenticityCertificatePdf({ ...print, edition: { ...print.edition, number: 26 } })).rejects.toThrow(/Print number 26 is outside an edition of 25/);
    await expect(authenticityCertificatePdf({ ...print, edition: { ...print.edition, number: 0 } })).rejects.toThrow(/edition\.number: Print number must be at least 1/);
    await expect(authenticityCertificatePdf({ ...print, edition: { ...print.edition, number: 2.5 } })).rejects.toThrow(/whole number/);
    await expect(authenticityCertificatePdf({ ...print, edition: { ...print.edition, artistProofs: -1 } })).rejects.toThrow(/cannot be negative/);
    await expect(authenticityCertificatePdf({ ...print, work: { ...print.work, yearPrinted: 2022 } })).rejects.toThrow(/before the picture was taken/);
    await expect(authenticityCertificatePdf({ ...print, size: { ...print.size, imageWidth: 400 } })).rejects.toThrow(/larger than the sheet/);
    await expect(authenticityCertificatePdf({ ...print, serial: 'SMK C 1' })).rejects.toThrow(CertificateDataError);
  });
});

describe('text outside WinAnsi', () => {
  it('keeps WinAnsi characters and spells out or marks the rest instead of failing', async () => {
    const { text, doc } = await readPdf(
      await authenticityCertificatePdf({
        ...print,
        photographerName: 'Zoë Ōkubo',
        printedBy: 'Łukasz Żuławski − studio 🍐',
        work: { ...print.work, title: '梨' },
      }),
    );
    expect(text).toContain('“?”'); // a CJK character has no WinAnsi form
    expect(text).toContain('Zoë Okubo'); // ë is in WinAnsi; Ō loses its macron
    expect(text).toContain('Lukasz Zulawski - studio ?');
    expect(shownStrings(doc.getPages()[0]!)).toContain('7/25');
    expect(doc.getSubject()).toContain('梨'); // metadata is UTF-16 and keeps the title exactly
    expect(doc.getSubject()).toContain('Zoë Ōkubo');
  });

  it('survives a shop name whose capitals leave WinAnsi (µ → Greek Μ)', async () => {
    const { text } = await readPdf(await licenceCertificatePdf({ ...licence, shopName: 'Studio µ' }));
    expect(text).toContain('STUDIO ?');
    expect(text).toContain('Studio µ'); // in running text, as written
  });

  it('does the same on the licence certificate', async () => {
    const { text } = await readPdf(
      await licenceCertificatePdf({ ...licence, work: { ...licence.work, title: '梨と包丁' }, licensee: { name: 'Đorđe Ŝarić' }, price: '₹12,000.00' }),
    );
    expect(text).toContain('“????”');
    expect(text).toContain('Dorde Saric');
    expect(text).toContain('INR12,000.00');
    expect(text).toContain('SMK-L-7Q4M-2KX9');
  });
});

describe('certificate text helpers', () => {
  it('knows exactly the characters pdf-lib’s standard fonts can encode (WinAnsiEncoding, 218 code points)', async () => {
    const scratch = await PDFDocument.create();
    const helvetica = await scratch.embedFont(StandardFonts.Helvetica);
    expect(winAnsiCodePoints().sort((a, b) => a - b)).toEqual([...helvetica.getCharacterSet()].sort((a, b) => a - b));
    // and whatever toWinAnsiText returns, a standard font encodes without throwing
    const nasty = 'Ωmega ☃ 梨 — “quotes” ‘x’ € ﬁne Ａ\u0000\u0007 e\u0301 \u202f🍐';
    expect(() => helvetica.encodeText(toWinAnsiText(nasty))).not.toThrow();
    expect(toWinAnsiText('e\u0301 ﬁne Ａ')).toBe('é fine A');
  });

  it('turns text into plain ASCII for EXIF', () => {
    expect(toAsciiText('Zoë Ōkubo')).toBe('Zoe Okubo');
    expect(toAsciiText('© 2025 Ærø — “Studio”')).toBe('(C) 2025 AEro - "Studio"');
    expect(toAsciiText('梨 Pear')).toBe('Pear');
  });

  it('wraps to the width it is given and breaks over-long words such as URLs', () => {
    const measure = (s: string) => s.length; // one unit per character
    expect(wrapText('a bb ccc dddd', 6, measure)).toEqual(['a bb', 'ccc', 'dddd']);
    expect(wrapText('one\n\ntwo', 10, measure)).toEqual(['one', '', 'two']);
    // After a dot or slash when one lies in the second half of the line, else at the full width.
    expect(wrapText('https://shop.example/licences/SMK-L-7Q4M', 16, measure)).toEqual(['https://shop.', 'example/licences', '/SMK-L-7Q4M']);
  });

  it('states print sizes in both units (1 in = 25.4 mm)', () => {
    expect(formatDimensions(8, 10, 'in')).toBe('8 × 10 in (203.2 × 254 mm)');
    expect(formatDimensions(210, 297, 'mm')).toBe('210 × 297 mm (8.27 × 11.69 in)'); // ISO 216 A4
  });
});
