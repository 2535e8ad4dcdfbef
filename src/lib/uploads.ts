/**
 * Pure rules for Studio uploads, shared by the server and the upload island: which image types the shop
 * takes (decided from the file's first bytes, never from its name or a declared type), how a file name
 * becomes a title, and how a title becomes a slug. No I/O.
 */

export const ACCEPTED_TYPES = ['jpeg', 'png', 'tiff', 'webp'] as const;
export type AcceptedType = (typeof ACCEPTED_TYPES)[number];

/** Extension used when an original is stored under its random name. */
export const STORED_EXTENSION: Record<AcceptedType, string> = { jpeg: 'jpg', png: 'png', tiff: 'tif', webp: 'webp' };

/** For the file picker's `accept` attribute; a hint only, the server decides from the content. */
export const ACCEPT_ATTRIBUTE = 'image/jpeg,image/png,image/tiff,image/webp,.jpg,.jpeg,.png,.tif,.tiff,.webp';

export const ACCEPTED_TYPES_TEXT = 'JPEG, PNG, TIFF or WebP';

/** How many leading bytes `sniffImageType` needs to decide (the WebP form type ends at byte 12). */
export const SNIFF_BYTES = 12;

const startsWith = (bytes: Uint8Array, signature: readonly number[], at = 0) =>
  bytes.length >= at + signature.length && signature.every((b, i) => bytes[at + i] === b);
const ascii = (bytes: Uint8Array, from: number, to: number) => String.fromCharCode(...bytes.subarray(from, to));

/**
 * The accepted image type the bytes start with, or null. Signatures: JPEG SOI marker FF D8 then the next
 * marker's FF; PNG's 8-byte signature; TIFF's byte order mark with the number 42 (II*\0 or MM\0*);
 * WebP's RIFF container with form type "WEBP" at bytes 8–11.
 */
export function sniffImageType(bytes: Uint8Array): AcceptedType | null {
  if (startsWith(bytes, [0xff, 0xd8, 0xff])) return 'jpeg';
  if (startsWith(bytes, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])) return 'png';
  if (startsWith(bytes, [0x49, 0x49, 0x2a, 0x00]) || startsWith(bytes, [0x4d, 0x4d, 0x00, 0x2a])) return 'tiff';
  if (bytes.length >= 12 && ascii(bytes, 0, 4) === 'RIFF' && ascii(bytes, 8, 12) === 'WEBP') return 'webp';
  return null;
}

/** A human name for some common refused types, so the refusal can say what it saw. */
export function describeRefusedType(bytes: Uint8Array): string | null {
  if (bytes.length >= 6 && /^GIF8[79]a$/.test(ascii(bytes, 0, 6))) return 'a GIF';
  if (bytes.length >= 5 && ascii(bytes, 0, 5) === '%PDF-') return 'a PDF';
  if (bytes.length >= 12 && ascii(bytes, 4, 8) === 'ftyp') {
    const brand = ascii(bytes, 8, 12);
    if (brand === 'avif' || brand === 'avis') return 'an AVIF image';
    if (/^(heic|heix|heim|heis|hevc|hevx|mif1|msf1)$/.test(brand)) return 'a HEIC/HEIF image';
  }
  const head = ascii(bytes, 0, Math.min(bytes.length, 64)).replace(/^\xEF\xBB\xBF/, '').trimStart().toLowerCase();
  if (head.startsWith('<svg') || head.startsWith('<?xml')) return 'an SVG or XML file';
  return null;
}

/** The refusal message for content that is not an accepted image. */
export function refusedTypeMessage(bytes: Uint8Array): string {
  const seen = describeRefusedType(bytes);
  return `${seen ? `This is ${seen}.` : 'This file is not an image the shop can read.'} The shop takes ${ACCEPTED_TYPES_TEXT} files.`;
}

/** The endings a file name may have (OWASP File Upload Cheat Sheet: an allow-list, checked on the decoded name). */
export const ACCEPTED_EXTENSIONS = ['jpg', 'jpeg', 'png', 'tif', 'tiff', 'webp'] as const;

/**
 * Why an uploaded file's name is refused before its bytes are read, or null. The content still decides the
 * type and the file is stored under a random name; this only turns away names that try to pass for
 * something else: a NUL character ("photo.php%00.jpg") or an ending outside the allow-list, such as a
 * double extension ("photo.jpg.php"). A name with no ending at all is left to the content check.
 */
export function fileNameRefusal(fileName: string): { status: number; code: string; message: string } | null {
  if (fileName.includes('\u0000')) return { status: 400, code: 'invalid_file_name', message: 'The file name contains a NUL character. Rename the file and try again.' };
  const last = fileName.split(/[/\\]/).pop() ?? '';
  const ending = /\.([A-Za-z][A-Za-z0-9]{0,4})$/.exec(last.trim())?.[1];
  if (ending && !(ACCEPTED_EXTENSIONS as readonly string[]).includes(ending.toLowerCase())) {
    return {
      status: 415,
      code: 'unsupported_type',
      message: `Files ending in .${ending} (${ending.toUpperCase()}) are not taken. The shop takes ${ACCEPTED_TYPES_TEXT} files, named ${ACCEPTED_EXTENSIONS.map((e) => `.${e}`).join(', ')}.`,
    };
  }
  return null;
}

export const TITLE_MAX_LENGTH = 120;
export const UNTITLED = 'Untitled';

// C0 and C1 controls and DEL; the bidirectional overrides and isolates that can disguise a name's ending.
// eslint-disable-next-line no-control-regex
const CONTROL = /[\u0000-\u0008\u000e-\u001f\u007f-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g;
// eslint-disable-next-line no-control-regex
const WHITESPACE_CONTROL = /[\t\n\v\f\r]/g;

/**
 * A work's first title from an uploaded file's name: only the last path segment (both / and \ count as
 * separators), without control characters or the extension, spaces collapsed, at most 120 characters.
 */
export function titleFromFileName(fileName: string): string {
  let name = fileName.normalize('NFC').replace(WHITESPACE_CONTROL, ' ').replace(CONTROL, '');
  name = name.split(/[/\\]/).pop() ?? '';
  name = name.replace(/\.[A-Za-z][A-Za-z0-9]{0,4}$/, ''); // "photo.jpeg", not "Version 2.1"
  // Cameras and file systems join words with hyphens and underscores; a title reads with spaces.
  name = name.replace(/[_-]+/g, ' ').replace(/\s+/g, ' ').trim();
  // Names such as "..": nothing but dots says nothing.
  if (/^\.*$/.test(name)) return UNTITLED;
  const chars = Array.from(name); // code points, so a cut never splits a surrogate pair
  if (chars.length > TITLE_MAX_LENGTH) name = chars.slice(0, TITLE_MAX_LENGTH).join('').trimEnd();
  return name;
}

export const SLUG_MAX_LENGTH = 80;

/** A URL slug from a title: lower-case ASCII letters and digits joined by single hyphens; "untitled" when none are left. */
export function slugify(title: string): string {
  const slug = title
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/&/g, ' and ')
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, SLUG_MAX_LENGTH)
    .replace(/-+$/, '');
  return slug || 'untitled';
}

/** `base` if no work uses it yet, otherwise the first free `base-2`, `base-3`, … */
export function uniqueSlug(base: string, taken: Iterable<string>): string {
  const used = new Set(taken);
  if (!used.has(base)) return base;
  for (let n = 2; ; n++) {
    const candidate = `${base}-${n}`;
    if (!used.has(candidate)) return candidate;
  }
}

/** A file size as people read it, counting in 1024s as the upload limit does: "840 KB", "12.5 MB". */
export function formatBytes(bytes: number): string {
  const units = ['KB', 'MB', 'GB'] as const;
  if (bytes < 1024) return `${bytes} ${bytes === 1 ? 'byte' : 'bytes'}`;
  let value = bytes / 1024;
  let unit = 0;
  while (value >= 1024 && unit < units.length - 1) {
    value /= 1024;
    unit += 1;
  }
  const digits = value < 10 && unit > 0 ? 1 : 0;
  return `${new Intl.NumberFormat('en-GB', { maximumFractionDigits: digits }).format(value)} ${units[unit]}`;
}
