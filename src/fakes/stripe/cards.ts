/**
 * What the documented test card numbers do (TRADE-FACTS §3.2). Only test numbers are meaningful here;
 * any other number that passes the Luhn check is declined.
 */

export type CardBrand = 'visa' | 'mastercard' | 'amex' | 'unknown';

export type CardOutcome =
  | { kind: 'paid' }
  | {
      kind: 'declined';
      /** The error `code`, e.g. `card_declined`, `expired_card`. */
      code: string;
      /** The `decline_code`, e.g. `generic_decline`, `insufficient_funds`. */
      declineCode: string;
      /** Shown to the buyer and used as the error message. */
      message: string;
    };

/** Digits only, spaces and dashes removed; null when anything else is in the text. */
export function normaliseCardNumber(text: string): string | null {
  const digits = text.replace(/[\s-]/g, '');
  return /^\d{12,19}$/.test(digits) ? digits : null;
}

/** The Luhn (mod 10) check, e.g. 4242424242424242 → true, 4242424242424241 → false. */
export function luhnValid(digits: string): boolean {
  if (!/^\d+$/.test(digits)) return false;
  let sum = 0;
  let double = false;
  for (let i = digits.length - 1; i >= 0; i--) {
    let d = digits.charCodeAt(i) - 48;
    if (double) {
      d *= 2;
      if (d > 9) d -= 9;
    }
    sum += d;
    double = !double;
  }
  return sum % 10 === 0;
}

export function cardBrand(digits: string): CardBrand {
  if (/^4/.test(digits)) return 'visa';
  if (/^3[47]/.test(digits)) return 'amex';
  const two = Number(digits.slice(0, 2));
  const four = Number(digits.slice(0, 4));
  if ((two >= 51 && two <= 55) || (four >= 2221 && four <= 2720)) return 'mastercard';
  return 'unknown';
}

const declined = (code: string, declineCode: string, message: string): CardOutcome => ({
  kind: 'declined',
  code,
  declineCode,
  message,
});

const GENERIC = declined('card_declined', 'generic_decline', 'Your card was declined.');

/** Documented test numbers → outcome (TRADE-FACTS §3.2). */
const TEST_CARDS: ReadonlyMap<string, CardOutcome> = new Map([
  ['4242424242424242', { kind: 'paid' }],
  ['5555555555554444', { kind: 'paid' }],
  ['378282246310005', { kind: 'paid' }],
  ['4000000000000002', GENERIC],
  ['4000000000009995', declined('card_declined', 'insufficient_funds', 'Your card has insufficient funds.')],
  ['4000000000000069', declined('expired_card', 'expired_card', 'Your card has expired.')],
  ['4000000000000127', declined('incorrect_cvc', 'incorrect_cvc', "Your card's security code is incorrect.")],
  [
    '4000000000000119',
    declined('processing_error', 'processing_error', 'An error occurred while processing your card. Try again in a little bit.'),
  ],
  // Cards that need 3-D Secure: this page has no authentication step, so they cannot complete here.
  [
    '4000002760003184',
    declined('card_declined', 'authentication_required', 'Your card needs authentication, which this test page does not offer.'),
  ],
  [
    '4000002500003155',
    declined('card_declined', 'authentication_required', 'Your card needs authentication, which this test page does not offer.'),
  ],
  [
    '4000000000003220',
    declined('card_declined', 'authentication_required', 'Your card needs authentication, which this test page does not offer.'),
  ],
]);

/** The outcome for a Luhn-valid number; unknown numbers are declined like a generic decline. */
export function cardOutcome(digits: string): CardOutcome {
  return TEST_CARDS.get(digits) ?? GENERIC;
}
