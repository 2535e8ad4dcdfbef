/** Minor units as the payment API counts them (TRADE-FACTS §3.3), formatted for people with Intl. */

/** Zero-decimal currencies: the amount is the whole number, no ×100 (TRADE-FACTS §3.3). */
export const ZERO_DECIMAL = new Set([
  'bif', 'clp', 'djf', 'gnf', 'jpy', 'kmf', 'krw', 'mga', 'pyg', 'rwf', 'ugx', 'vnd', 'vuv', 'xaf', 'xof', 'xpf',
]);

/** Three-decimal currencies: amounts in thousandths, last digit 0 (TRADE-FACTS §3.3). */
export const THREE_DECIMAL = new Set(['bhd', 'jod', 'kwd', 'omr', 'tnd']);

export function minorDigits(currency: string): number {
  const c = currency.toLowerCase();
  if (ZERO_DECIMAL.has(c)) return 0;
  if (THREE_DECIMAL.has(c)) return 3;
  return 2;
}

/** True when Intl knows the ISO 4217 code. */
export function knownCurrency(currency: string): boolean {
  if (!/^[a-z]{3}$/.test(currency)) return false;
  try {
    new Intl.NumberFormat('en', { style: 'currency', currency: currency.toUpperCase() });
    return true;
  } catch {
    return false;
  }
}

/** e.g. (12000, 'gbp') → "£120.00"; (500, 'jpy') → "¥500"; (5120, 'kwd') → "KWD 5.120". */
export function formatMinor(amount: number, currency: string, locale = 'en-GB'): string {
  const digits = minorDigits(currency);
  return new Intl.NumberFormat(locale, {
    style: 'currency',
    currency: currency.toUpperCase(),
    minimumFractionDigits: digits,
    maximumFractionDigits: digits,
  }).format(amount / 10 ** digits);
}
