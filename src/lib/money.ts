/** Money is an integer count of the currency's minor unit; these helpers format it with Intl. */

export const DEFAULT_LOCALE = 'en-GB';

/** Digits after the decimal point for a currency, as Intl (ISO 4217) has them: 2 for GBP, 0 for JPY. */
export function minorUnitDigits(currency: string): number {
  return new Intl.NumberFormat('en', { style: 'currency', currency }).resolvedOptions().maximumFractionDigits ?? 2;
}

export function assertMinorUnits(amount: number): void {
  if (!Number.isSafeInteger(amount)) throw new TypeError(`amount must be an integer in minor units, got ${amount}`);
}

const formats = new Map<string, Intl.NumberFormat>();

/** Building a formatter costs far more than using one; pages format hundreds of prices. */
function currencyFormat(locale: string, currency: string): Intl.NumberFormat {
  const key = `${locale}|${currency}`;
  let format = formats.get(key);
  if (!format) {
    format = new Intl.NumberFormat(locale, { style: 'currency', currency });
    formats.set(key, format);
  }
  return format;
}

/** Formats minor units, e.g. (12500, 'GBP') → "£125.00"; (500, 'JPY') → "¥500". */
export function formatMoney(amount: number, currency: string, locale: string = DEFAULT_LOCALE): string {
  assertMinorUnits(amount);
  const digits = minorUnitDigits(currency);
  return currencyFormat(locale, currency).format(amount / 10 ** digits);
}

/** Multiplies minor units by a rate in basis points, rounding half away from zero to a whole minor unit. */
export function applyBasisPoints(amount: number, basisPoints: number): number {
  assertMinorUnits(amount);
  if (!Number.isInteger(basisPoints)) throw new TypeError('basis points must be an integer');
  const product = amount * basisPoints;
  // `+ 0` turns a negative zero (e.g. -1 × 1 bp) into 0, which Intl would print as "-£0.00".
  return Math.sign(product) * Math.round(Math.abs(product) / 10000) + 0;
}

export function sumMinor(amounts: readonly number[]): number {
  return amounts.reduce((total, amount) => {
    assertMinorUnits(amount);
    return total + amount;
  }, 0);
}

/**
 * Reads an amount typed in major units ("12.50", "12,50" is refused, "500" for yen) into minor units
 * without binary floating point (19.99 × 100 is 1998.9999… in IEEE-754). Returns null for anything
 * that is not a plain non-negative amount with at most the currency's number of decimals.
 */
export function parseMajorUnits(text: string, currency: string): number | null {
  const digits = minorUnitDigits(currency);
  const match = /^\s*(\d{1,12})(?:\.(\d+))?\s*$/.exec(text);
  if (!match) return null;
  const [, whole, fraction = ''] = match;
  if (fraction.length > digits) return null;
  const minor = Number(whole) * 10 ** digits + Number(fraction.padEnd(digits, '0') || '0');
  return Number.isSafeInteger(minor) ? minor : null;
}

/** Minor units as a plain decimal string in major units, for form fields: (1250, 'GBP') → "12.50", (500, 'JPY') → "500". */
export function toMajorUnitsText(amount: number, currency: string): string {
  assertMinorUnits(amount);
  const digits = minorUnitDigits(currency);
  if (digits === 0) return String(amount);
  const sign = amount < 0 ? '-' : '';
  const abs = String(Math.abs(amount)).padStart(digits + 1, '0');
  return `${sign}${abs.slice(0, -digits)}.${abs.slice(-digits)}`;
}
