/**
 * CSV for spreadsheets and accounting tools, written with csv-stringify (no I/O):
 * - RFC 4180: CRLF between records, a field holding a comma, a quote or a line break is quoted and its
 *   quotes doubled; the first record is the header (announced with `header=present`, RFC 4180 §3).
 * - UTF-8 with a byte order mark: without it Excel on Windows reads the file in the machine's legacy
 *   code page and breaks every name with an accent and every £; csv-parse (`bom: true`), Numbers,
 *   LibreOffice and Google Sheets all read the mark and drop it.
 * - Formula injection (OWASP "CSV Injection"): a text cell starting with = + - @, a tab or a carriage
 *   return gets a leading apostrophe, so a spreadsheet shows it as text instead of running it. Numbers
 *   we write ourselves are passed as numbers or plain decimals and are never negative.
 */
import { stringify } from 'csv-stringify/sync';

export type CsvCell = string | number | null | undefined;

export const CSV_CONTENT_TYPE = 'text/csv; charset=utf-8; header=present';

export function toCsv(header: readonly string[], rows: readonly (readonly CsvCell[])[]): string {
  return stringify([[...header], ...rows.map((r) => r.map((c) => (c == null ? '' : c)))], {
    bom: true,
    record_delimiter: 'windows',
    quote_record_delimiter: true,
    escape_formulas: true,
  });
}

/** `attachment; filename="…"` for a name made only of safe characters (RFC 6266 §4.3 needs no encoding then). */
export function attachment(fileName: string): string {
  if (!/^[\w.-]+$/.test(fileName)) throw new RangeError('file names here are letters, digits, dot, dash and underscore');
  return `attachment; filename="${fileName}"`;
}
