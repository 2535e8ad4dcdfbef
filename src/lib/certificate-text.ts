/**
 * Text helpers for certificates and delivered files: safe character sets (WinAnsi for PDF standard
 * fonts, plain ASCII for EXIF), line wrapping to a measured width, and date and number formatting.
 * Pure: no I/O, usable on either side.
 */

// ---------------------------------------------------------------------------------------------
// Character sets

/**
 * WinAnsiEncoding codes 0x80–0x9F and the Unicode characters they stand for (PDF 32000-1:2008,
 * Annex D.2). 0x20–0x7E are ASCII and 0xA0–0xFF are Latin-1, code for code; 0x81, 0x8D, 0x8F, 0x90
 * and 0x9D are unassigned.
 */
const WINANSI_HIGH: ReadonlyArray<readonly [code: number, unicode: number]> = [
  [0x80, 0x20ac], [0x82, 0x201a], [0x83, 0x0192], [0x84, 0x201e], [0x85, 0x2026], [0x86, 0x2020],
  [0x87, 0x2021], [0x88, 0x02c6], [0x89, 0x2030], [0x8a, 0x0160], [0x8b, 0x2039], [0x8c, 0x0152],
  [0x8e, 0x017d], [0x91, 0x2018], [0x92, 0x2019], [0x93, 0x201c], [0x94, 0x201d], [0x95, 0x2022],
  [0x96, 0x2013], [0x97, 0x2014], [0x98, 0x02dc], [0x99, 0x2122], [0x9a, 0x0161], [0x9b, 0x203a],
  [0x9c, 0x0153], [0x9e, 0x017e], [0x9f, 0x0178],
];
const UNICODE_TO_WINANSI = new Map<number, number>(WINANSI_HIGH.map(([code, unicode]) => [unicode, code]));
const WINANSI_TO_UNICODE = new Map<number, number>(WINANSI_HIGH);

/** The WinAnsi byte for a Unicode code point, or undefined when the encoding has none. */
export function winAnsiCode(codePoint: number): number | undefined {
  if ((codePoint >= 0x20 && codePoint <= 0x7e) || (codePoint >= 0xa0 && codePoint <= 0xff)) return codePoint;
  return UNICODE_TO_WINANSI.get(codePoint);
}

/** The Unicode code point a WinAnsi byte stands for, or undefined for unassigned bytes. */
export function winAnsiToUnicode(code: number): number | undefined {
  if ((code >= 0x20 && code <= 0x7e) || (code >= 0xa0 && code <= 0xff)) return code;
  return WINANSI_TO_UNICODE.get(code);
}

/** Every Unicode code point WinAnsi can encode (218 of them). */
export function winAnsiCodePoints(): number[] {
  const all: number[] = [];
  for (let code = 0x20; code <= 0xff; code++) {
    const unicode = winAnsiToUnicode(code);
    if (unicode !== undefined) all.push(unicode);
  }
  return all;
}

const isAscii = (cp: number) => cp >= 0x20 && cp <= 0x7e;
const isWinAnsi = (cp: number) => winAnsiCode(cp) !== undefined;

/** Characters that Unicode decomposition does not reduce to a base letter, spelled the usual way. */
const SPELLED: Record<string, string> = {
  ß: 'ss', ẞ: 'SS', æ: 'ae', Æ: 'AE', œ: 'oe', Œ: 'OE', ø: 'o', Ø: 'O', ł: 'l', Ł: 'L', đ: 'd', Đ: 'D',
  ð: 'd', Ð: 'D', þ: 'th', Þ: 'Th', ı: 'i', ħ: 'h', Ħ: 'H', ŋ: 'ng', Ŋ: 'NG', ſ: 's', ƒ: 'f',
  '‘': "'", '’': "'", '‚': "'", '‛': "'", '′': "'", '‵': "'", 'ʼ': "'", 'ʹ': "'", '‹': "'", '›': "'",
  '“': '"', '”': '"', '„': '"', '‟': '"', '″': '"', '«': '"', '»': '"',
  '‐': '-', '‑': '-', '‒': '-', '–': '-', '—': '-', '―': '-', '−': '-', '⁃': '-',
  '…': '...', '•': '-', '·': '-', '×': 'x', '÷': '/', '≤': '<=', '≥': '>=', '≠': '!=', '≈': '~',
  '→': '->', '←': '<-', '↔': '<->', '©': '(C)', '®': '(R)', '™': '(TM)', '°': ' deg', '†': '+', '‡': '++',
  '€': 'EUR', '£': 'GBP', '¥': 'JPY', '₹': 'INR', '₩': 'KRW', '₽': 'RUB', '₺': 'TRY', '₪': 'ILS',
  '₫': 'VND', '₱': 'PHP', '₴': 'UAH', '₦': 'NGN', '฿': 'THB', '₸': 'KZT', '₲': 'PYG', '₡': 'CRC', '₵': 'GHS',
};
/** Space-like and invisible characters. */
const SPACES = /[\u00a0\u1680\u2000-\u200a\u202f\u205f\u3000]/u;
const INVISIBLE = /[\u00ad\u180e\u200b-\u200d\u2060\ufeff]/u;
const LINE_BREAKS = /\r\n?|[\u2028\u2029\u0085]/gu;

interface SafeTextOptions {
  /** Keep "\n" as a paragraph break; otherwise line breaks become spaces. */
  keepNewlines?: boolean;
}

function toCharacterSet(
  text: string,
  accepts: (cp: number) => boolean,
  unknown: string,
  options: SafeTextOptions,
): string {
  const normalised = text.normalize('NFC').replace(LINE_BREAKS, '\n');
  let out = '';
  for (const ch of normalised) {
    const cp = ch.codePointAt(0)!;
    if (ch === '\n') out += options.keepNewlines ? '\n' : ' ';
    else if (ch === '\t') out += ' ';
    else if (cp < 0x20 || (cp >= 0x7f && cp < 0xa0) || INVISIBLE.test(ch)) continue;
    else if (SPACES.test(ch)) out += accepts(0xa0) && ch === '\u00a0' ? ch : ' ';
    else if (accepts(cp)) out += ch;
    else out += substitute(ch, accepts) ?? unknown;
  }
  return out;
}

/** A stand-in for one character from the accepted set: a usual spelling, or the letter without its marks. */
function substitute(ch: string, accepts: (cp: number) => boolean): string | undefined {
  const fits = (s: string) => s.length > 0 && [...s].every((c) => accepts(c.codePointAt(0)!));
  const spelled = SPELLED[ch];
  if (spelled !== undefined && fits(spelled)) return spelled;
  // Compatibility decomposition then dropping combining marks: "Ō" → "O", "ﬁ" → "fi", "Ａ" → "A".
  const stripped = ch.normalize('NFKD').replace(/\p{M}+/gu, '');
  if (fits(stripped)) return stripped;
  const parts = [...stripped].map((c) => (accepts(c.codePointAt(0)!) ? c : SPELLED[c]));
  if (stripped && parts.every((p) => p !== undefined && fits(p))) return parts.join('');
  return undefined;
}

/**
 * Text a PDF standard font (WinAnsiEncoding) can show: characters inside the encoding stay as they
 * are, others are spelled out or lose their accents ("Ō" → "O", "−" → "-"), and anything left
 * (e.g. CJK) becomes "?". Control characters are dropped.
 */
export function toWinAnsiText(text: string, options: SafeTextOptions = {}): string {
  return toCharacterSet(text, isWinAnsi, '?', options);
}

/**
 * Plain printable ASCII for EXIF text tags (CIPA DC-008 type ASCII): transliterated where there is
 * a usual spelling, other characters dropped, runs of spaces collapsed.
 */
export function toAsciiText(text: string): string {
  return toCharacterSet(text, isAscii, '', {}).replace(/ {2,}/g, ' ').trim();
}

// ---------------------------------------------------------------------------------------------
// Wrapping

/** Breaking points inside an over-long word (e.g. a URL), after which a line may end. */
const SOFT_BREAKS = new Set(['/', '-', '?', '&', '=', '.', '_', '#']);

/**
 * Greedy word wrap of `text` to lines no wider than `maxWidth` as measured by `measure`. "\n" starts
 * a new paragraph (kept as an empty line when blank); a word wider than the line is broken after a
 * slash, hyphen or similar where possible, else between characters.
 */
export function wrapText(text: string, maxWidth: number, measure: (s: string) => number): string[] {
  if (!(maxWidth > 0)) throw new RangeError('maxWidth must be positive');
  const lines: string[] = [];
  for (const paragraph of text.split('\n')) {
    const words = paragraph.split(/ +/).filter(Boolean);
    if (words.length === 0) {
      lines.push('');
      continue;
    }
    let line = '';
    for (const word of words) {
      const candidate = line ? `${line} ${word}` : word;
      if (measure(candidate) <= maxWidth) {
        line = candidate;
        continue;
      }
      if (line) lines.push(line);
      line = '';
      let rest = word;
      while (measure(rest) > maxWidth) {
        const [head, tail] = splitLongWord(rest, maxWidth, measure);
        lines.push(head);
        rest = tail;
      }
      line = rest;
    }
    lines.push(line);
  }
  return lines;
}

function splitLongWord(word: string, maxWidth: number, measure: (s: string) => number): [string, string] {
  const chars = [...word];
  let fit = 0;
  while (fit < chars.length && measure(chars.slice(0, fit + 1).join('')) <= maxWidth) fit++;
  fit = Math.max(fit, 1); // always make progress, even when one character is wider than the line
  let cut = fit;
  for (let i = fit; i > Math.floor(fit / 2); i--) {
    if (SOFT_BREAKS.has(chars[i - 1]!)) {
      cut = i;
      break;
    }
  }
  return [chars.slice(0, cut).join(''), chars.slice(cut).join('')];
}

// ---------------------------------------------------------------------------------------------
// Dates and numbers

const CALENDAR_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;

/** A calendar date as "YYYY-MM-DD" (ISO 8601): a Date is read in UTC; a string must already be a real date. */
export function toIsoDate(value: Date | string): string {
  if (value instanceof Date) {
    if (Number.isNaN(value.getTime())) throw new RangeError('Invalid date');
    return value.toISOString().slice(0, 10);
  }
  const match = CALENDAR_DATE.exec(value);
  if (match) {
    const [, y, m, d] = match;
    const date = new Date(Date.UTC(Number(y), Number(m) - 1, Number(d)));
    if (date.getUTCFullYear() === Number(y) && date.getUTCMonth() === Number(m) - 1 && date.getUTCDate() === Number(d)) return value;
    throw new RangeError(`Invalid date: ${value}`);
  }
  return toIsoDate(new Date(value));
}

/** "2025-03-14" or a Date → "14 March 2025" (UTC, so a date never shifts with the server's zone). */
export function formatLongDate(value: Date | string, locale = 'en-GB'): string {
  const iso = toIsoDate(value);
  return new Intl.DateTimeFormat(locale, { day: 'numeric', month: 'long', year: 'numeric', timeZone: 'UTC' }).format(
    new Date(`${iso}T00:00:00Z`),
  );
}

/** 500000 → "500,000". */
export function formatCount(value: number, locale = 'en-GB'): string {
  return new Intl.NumberFormat(locale, { maximumFractionDigits: 0 }).format(value);
}

/** Millimetres per inch (international inch, 1959). */
const MM_PER_INCH = 25.4;

function trimNumber(value: number, digits: number): string {
  return String(Number(value.toFixed(digits)));
}

/**
 * Exact print dimensions in both units, e.g. (8, 10, 'in') → "8 × 10 in (203.2 × 254 mm)" and
 * (210, 297, 'mm') → "210 × 297 mm (8.27 × 11.69 in)".
 */
export function formatDimensions(width: number, height: number, unit: 'mm' | 'in'): string {
  if (unit === 'in') {
    return `${trimNumber(width, 2)} × ${trimNumber(height, 2)} in (${trimNumber(width * MM_PER_INCH, 1)} × ${trimNumber(height * MM_PER_INCH, 1)} mm)`;
  }
  return `${trimNumber(width, 1)} × ${trimNumber(height, 1)} mm (${trimNumber(width / MM_PER_INCH, 2)} × ${trimNumber(height / MM_PER_INCH, 2)} in)`;
}

/** The edition mark written on a print: number n of N, as "n/N". */
export function editionMark(number: number, total: number): string {
  return `${number}/${total}`;
}
