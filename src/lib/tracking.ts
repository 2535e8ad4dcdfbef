/** Carriers and their tracking-number formats. Pure: the Dispatch form and the server check the same way. */

export const CARRIERS = {
  'royal-mail': { name: 'Royal Mail (tracked)', example: 'RR123456785GB' },
  ups: { name: 'UPS', example: '1Z999AA10123456784' },
  'dhl-express': { name: 'DHL Express', example: '1234567890' },
  other: { name: 'Another carrier', example: 'AB-12345' },
} as const;
export type Carrier = keyof typeof CARRIERS;
export const CARRIER_IDS = Object.keys(CARRIERS) as Carrier[];

/**
 * UPU S10 check digit over the 8 serial digits: weights 8 6 4 2 3 5 9 7, then 11 − (sum mod 11),
 * where 10 becomes 0 and 11 becomes 5 (UPU standard S10, from memory).
 */
export function s10CheckDigit(serial: string): number {
  if (!/^\d{8}$/.test(serial)) throw new RangeError('an S10 serial is 8 digits');
  const weights = [8, 6, 4, 2, 3, 5, 9, 7];
  const sum = [...serial].reduce((total, digit, i) => total + Number(digit) * weights[i]!, 0);
  const check = 11 - (sum % 11);
  return check === 10 ? 0 : check === 11 ? 5 : check;
}

/** The tracking number cleaned up (spaces out, upper case) when it fits the carrier's format, else null. */
export function normaliseTracking(carrier: Carrier, raw: string): string | null {
  const value = raw.replace(/\s+/g, '').toUpperCase();
  switch (carrier) {
    case 'royal-mail': {
      // UPU S10: two service letters, eight digits, a check digit, the country code.
      const m = /^([A-Z]{2})(\d{8})(\d)([A-Z]{2})$/.exec(value);
      return m && s10CheckDigit(m[2]!) === Number(m[3]) ? value : null;
    }
    case 'ups':
      return /^1Z[0-9A-Z]{16}$/.test(value) ? value : null; // from memory
    case 'dhl-express':
      return /^\d{10}$/.test(value) ? value : null; // from memory
    case 'other':
      return /^[A-Z0-9][A-Z0-9-]{3,39}$/.test(value) ? value : null;
  }
}
