import { describe, expect, it } from 'vitest';
import {
  SNIFF_BYTES, describeRefusedType, formatBytes, refusedTypeMessage, slugify, sniffImageType, titleFromFileName, uniqueSlug,
} from '~/lib/uploads';

const bytes = (...parts: (number[] | string)[]) =>
  Uint8Array.from(parts.flatMap((p) => (typeof p === 'string' ? [...p].map((c) => c.charCodeAt(0)) : p)));

describe('sniffImageType: the content decides, not the name', () => {
  it('knows JPEG by the SOI marker FF D8 followed by a marker FF (ITU-T T.81 Annex B, Table B.1; JFIF 1.02)', () => {
    expect(sniffImageType(bytes([0xff, 0xd8, 0xff, 0xe0, 0, 0x10], 'JFIF', [0]))).toBe('jpeg');
    expect(sniffImageType(bytes([0xff, 0xd8, 0xff, 0xe1], 'Exif'))).toBe('jpeg');
    expect(sniffImageType(bytes([0xff, 0xd8]))).toBeNull(); // SOI alone is not enough
  });

  it('knows PNG by its 8-byte signature 89 50 4E 47 0D 0A 1A 0A (PNG spec, ISO/IEC 15948 §5.2)', () => {
    expect(sniffImageType(bytes([0x89], 'PNG', [0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d]))).toBe('png');
    // A signature mangled by a text-mode transfer (CR LF → LF) is refused, as the signature is designed to show.
    expect(sniffImageType(bytes([0x89], 'PNG', [0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d]))).toBeNull();
  });

  it("knows TIFF by the byte order 'II' or 'MM' and the number 42 in that order (TIFF 6.0, Section 2 'Image File Header')", () => {
    expect(sniffImageType(bytes('II', [0x2a, 0x00, 8, 0, 0, 0]))).toBe('tiff');
    expect(sniffImageType(bytes('MM', [0x00, 0x2a, 0, 0, 0, 8]))).toBe('tiff');
    expect(sniffImageType(bytes('II', [0x00, 0x2a, 8, 0, 0, 0]))).toBeNull(); // byte order and 42 disagree
    // BigTIFF uses 43 and is not offered (TIFF 6.0 knows only 42).
    expect(sniffImageType(bytes('II', [0x2b, 0x00, 8, 0, 0, 0]))).toBeNull();
  });

  it("knows WebP by the RIFF header with form type 'WEBP' at bytes 8–11 (RFC 9649, WebP container: 'RIFF Header')", () => {
    expect(sniffImageType(bytes('RIFF', [0x24, 0, 0, 0], 'WEBPVP8 '))).toBe('webp');
    expect(sniffImageType(bytes('RIFF', [0x24, 0, 0, 0], 'WAVEfmt '))).toBeNull(); // a RIFF sound file
    expect(sniffImageType(bytes('RIFF', [0x24, 0, 0, 0], 'WEB'))).toBeNull(); // too short to tell
    expect(SNIFF_BYTES).toBe(12);
  });

  it('refuses other formats and names the common ones in the refusal', () => {
    const gif = bytes('GIF89a', [1, 0, 1, 0]); // GIF89a specification, Header block
    const pdf = bytes('%PDF-1.7\n'); // ISO 32000-1 §7.5.2 file header
    const heic = bytes([0, 0, 0, 0x18], 'ftypheic', [0, 0, 0, 0]); // ISO/IEC 14496-12 ftyp box, ISO/IEC 23008-12 brand
    const avif = bytes([0, 0, 0, 0x1c], 'ftypavif'); // AV1 Image File Format, brand 'avif'
    const svg = bytes('<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg"/>');
    const text = bytes('hello, this is not a picture');
    for (const b of [gif, pdf, heic, avif, svg, text, bytes([])]) expect(sniffImageType(b)).toBeNull();
    expect(describeRefusedType(gif)).toBe('a GIF');
    expect(describeRefusedType(pdf)).toBe('a PDF');
    expect(describeRefusedType(heic)).toBe('a HEIC/HEIF image');
    expect(describeRefusedType(avif)).toBe('an AVIF image');
    expect(describeRefusedType(svg)).toBe('an SVG or XML file');
    expect(describeRefusedType(bytes('  <svg width="10"/>'))).toBe('an SVG or XML file');
    expect(describeRefusedType(text)).toBeNull();
    expect(refusedTypeMessage(gif)).toMatch(/GIF.*JPEG, PNG, TIFF or WebP/);
    expect(refusedTypeMessage(text)).toMatch(/JPEG, PNG, TIFF or WebP/);
  });
});

describe('titleFromFileName', () => {
  it('keeps only the last path segment, with either separator (OWASP File Upload: never trust the name)', () => {
    expect(titleFromFileName('../../etc/passwd.jpg')).toBe('passwd');
    expect(titleFromFileName('a\\b.jpg')).toBe('b');
    expect(titleFromFileName('C:\\Users\\me\\Pictures\\Pear on slate.tif')).toBe('Pear on slate');
    expect(titleFromFileName('/abs/path/')).toBe('Untitled');
  });

  it('removes control characters and bidirectional overrides, and collapses spaces', () => {
    expect(titleFromFileName('bad\u0000name\u0007.jpg')).toBe('badname');
    expect(titleFromFileName('two\nlines\there.png')).toBe('two lines here');
    expect(titleFromFileName('  lots    of   space  .webp')).toBe('lots of space');
    expect(titleFromFileName('\u009bC1\u007f.jpg')).toBe('C1');
    // U+202E RIGHT-TO-LEFT OVERRIDE can make "exe.jpg" look like "gpj.exe"; it is dropped.
    expect(titleFromFileName('photo\u202Egpj.exe')).toBe('photogpj');
    // A NUL-byte trick (OWASP: "file.php%00.jpg") leaves only a harmless title.
    expect(titleFromFileName(decodeURIComponent('photo.php%00.jpg'))).toBe('photo.php');
  });

  it('reads hyphens and underscores as spaces', () => {
    expect(titleFromFileName('north-window_study.jpg')).toBe('north window study');
    expect(titleFromFileName('IMG_0042.JPG')).toBe('IMG 0042');
  });

  it('strips one extension, but not a number that looks like one', () => {
    expect(titleFromFileName('Quince.JPEG')).toBe('Quince');
    expect(titleFromFileName('archive.tar.gz')).toBe('archive.tar');
    expect(titleFromFileName('Study 2.1')).toBe('Study 2.1');
    expect(titleFromFileName('no extension')).toBe('no extension');
  });

  it('falls back to "Untitled" and caps the length at 120 characters without splitting a character', () => {
    for (const empty of ['', '.jpg', '   .png', '..', '\u0000\u0001.tif']) expect(titleFromFileName(empty)).toBe('Untitled');
    expect(titleFromFileName(`${'x'.repeat(300)}.jpg`)).toHaveLength(120);
    const emoji = titleFromFileName(`${'🍐'.repeat(130)}.jpg`);
    expect(Array.from(emoji)).toHaveLength(120);
    expect(emoji).toBe('🍐'.repeat(120));
    expect(titleFromFileName('Cafe\u0301 still life.jpg')).toBe('Café still life'); // NFC: é as one character
  });
});

describe('slugs', () => {
  it('makes lower-case ASCII words joined by hyphens', () => {
    expect(slugify('Pear on slate')).toBe('pear-on-slate');
    expect(slugify('Crème brûlée, №2')).toBe('creme-brulee-no2');
    expect(slugify('Salt & pepper')).toBe('salt-and-pepper');
    expect(slugify('  --Quince--  ')).toBe('quince');
    expect(slugify('静物')).toBe('untitled');
    expect(slugify('Untitled')).toBe('untitled');
    expect(slugify('word '.repeat(40)).length).toBeLessThanOrEqual(80);
    expect(slugify('word '.repeat(40))).not.toMatch(/-$/);
  });

  it('adds -2, -3, … until the slug is free', () => {
    expect(uniqueSlug('pear', [])).toBe('pear');
    expect(uniqueSlug('pear', ['pear'])).toBe('pear-2');
    expect(uniqueSlug('pear', ['pear', 'pear-2', 'pear-3'])).toBe('pear-4');
    expect(uniqueSlug('pear', ['pear', 'pear-3'])).toBe('pear-2');
    expect(uniqueSlug('pear', ['pear-2'])).toBe('pear');
  });
});

describe('formatBytes', () => {
  it('counts in 1024s, as the upload limit (UPLOAD_MAX_MB × 1024 × 1024) does', () => {
    expect(formatBytes(0)).toBe('0 bytes');
    expect(formatBytes(1)).toBe('1 byte');
    expect(formatBytes(1023)).toBe('1023 bytes');
    expect(formatBytes(1024)).toBe('1 KB');
    expect(formatBytes(860_160)).toBe('840 KB'); // 840 × 1024
    expect(formatBytes(1024 * 1024)).toBe('1 MB');
    expect(formatBytes(2.5 * 1024 * 1024)).toBe('2.5 MB'); // one decimal under 10
    expect(formatBytes(12.5 * 1024 * 1024)).toBe('13 MB'); // none from 10 up
    expect(formatBytes(200 * 1024 * 1024)).toBe('200 MB');
    expect(formatBytes(1.5 * 1024 ** 3)).toBe('1.5 GB');
  });
});
