import { describe, expect, it } from 'vitest';
import {
  answerInput, customLicenceName, enquiryInput, isExpired, majorToMinor, minorToMajorText, notAddableReason, quoteExpiry,
  quoteState, termsSummary, QUOTE_ID_PATTERN,
} from '../../src/lib/quote-schemas';

describe('majorToMinor: a typed price in exact minor units', () => {
  it.each([
    ['10.00', 'GBP', 1000], // Stripe: charge 10 USD → amount=1000 (TRADE-FACTS §3.3, docs.stripe.com/currencies); GBP is two-decimal too
    ['10.00', 'USD', 1000], // TRADE-FACTS §3.3 check value toMinor("10.00","usd") = 1000
    ['500', 'JPY', 500], // zero-decimal: ¥500 → amount=500 (TRADE-FACTS §3.3 check value)
    ['19.99', 'GBP', 1999], // 19.99 × 100 = 1998.999… in IEEE-754 (TRADE-FACTS §3.3 [VERIFIED]); the exact answer is 1999
    ['0.29', 'EUR', 29], // 0.29 × 100 = 28.999999999999996 in IEEE-754 (checked with Node 20)
    ['1.1', 'GBP', 110], // one digit after the point is tenths: 1.1 → 110 (decimal arithmetic)
    ['1,250.50', 'GBP', 125050], // thousands separator ignored (decimal arithmetic)
    ['5.124', 'KWD', 5120], // three-decimal: last digit 0, round to the nearest ten (TRADE-FACTS §3.3 check value)
    ['99999.99', 'USD', 9999999], // 8 digits is Stripe's largest amount (TRADE-FACTS §3.3: up to 99999999)
  ])('%s %s → %d', (text, currency, expected) => {
    expect(majorToMinor(text, currency)).toEqual({ ok: true, value: expected });
  });

  it('never goes through binary floats: every two-digit price from 0.01 to 99.99 is exact', () => {
    // Decimal reference: the digits themselves (e.g. "19.99" → 19 × 100 + 99), ECMAScript integer arithmetic.
    for (let major = 0; major < 100; major++) {
      for (let cents = major === 0 ? 1 : 0; cents < 100; cents++) {
        const text = `${major}.${String(cents).padStart(2, '0')}`;
        expect(majorToMinor(text, 'GBP')).toEqual({ ok: true, value: major * 100 + cents });
      }
    }
  });

  it.each([
    ['0', 'GBP'], ['0.00', 'GBP'], ['-5', 'GBP'], ['', 'GBP'], ['abc', 'GBP'], ['1e3', 'GBP'], ['12.5.0', 'GBP'],
    ['19,99', 'EUR'], // a decimal comma is ambiguous with a thousands separator: refused, not guessed
    ['10.001', 'GBP'], // more digits than GBP has (ISO 4217: 2)
    ['500.5', 'JPY'], // JPY has no minor unit (TRADE-FACTS §3.3 zero-decimal list)
    ['1000000.00', 'USD'], // above Stripe's 8-digit amount limit (TRADE-FACTS §3.3)
    ['Infinity', 'GBP'], ['NaN', 'GBP'], [' 0x10 ', 'GBP'],
  ])('refuses %j in %s', (text, currency) => {
    expect(majorToMinor(text, currency).ok).toBe(false);
  });

  it('writes minor units back as the price box shows them', () => {
    expect(minorToMajorText(1999, 'GBP')).toBe('19.99'); // ISO 4217: 2 digits
    expect(minorToMajorText(5, 'GBP')).toBe('0.05');
    expect(minorToMajorText(500, 'JPY')).toBe('500'); // ISO 4217: 0 digits
  });
});

describe('expiry', () => {
  const answered = new Date('2026-03-01T10:00:00.000Z');

  it('runs validity × 24 hours from the answer', () => {
    expect(quoteExpiry(answered, 14).toISOString()).toBe('2026-03-15T10:00:00.000Z'); // 14 × 86 400 000 ms (calendar arithmetic)
    expect(quoteExpiry(answered, 1).toISOString()).toBe('2026-03-02T10:00:00.000Z');
    expect(quoteExpiry(answered, 90).toISOString()).toBe('2026-05-30T10:00:00.000Z'); // 1 March + 90 days = 30 May (calendar)
  });

  it('refuses validity outside 1–90 days', () => {
    for (const days of [0, -1, 91, 1.5, Number.NaN]) expect(() => quoteExpiry(answered, days)).toThrow(RangeError);
  });

  it('is still good a millisecond before expiry, and expired at the instant itself', () => {
    const expiresAt = quoteExpiry(answered, 14);
    expect(isExpired(expiresAt, new Date(expiresAt.getTime() - 1))).toBe(false);
    expect(isExpired(expiresAt, expiresAt)).toBe(true);
    expect(isExpired(expiresAt, new Date(expiresAt.getTime() + 1))).toBe(true);
    expect(isExpired(null, new Date())).toBe(false);
  });

  it('reads a quoted quote past its expiry as expired, and nothing else', () => {
    const expiresAt = '2026-03-15T10:00:00.000Z';
    const after = new Date('2026-03-15T10:00:00.000Z');
    const before = new Date('2026-03-15T09:59:59.999Z');
    expect(quoteState({ status: 'quoted', expiresAt }, before)).toBe('quoted');
    expect(quoteState({ status: 'quoted', expiresAt }, after)).toBe('expired');
    expect(quoteState({ status: 'paid', expiresAt }, after)).toBe('paid');
    expect(quoteState({ status: 'declined', expiresAt: null }, after)).toBe('declined');
    expect(notAddableReason('quoted')).toBeNull();
    for (const state of ['requested', 'expired', 'declined', 'paid', 'withdrawn'] as const) expect(notAddableReason(state)).toBeTruthy();
    expect(notAddableReason('expired', expiresAt)).toMatch(/expired on 15 March 2026/);
  });
});

describe('the forms', () => {
  const enquiry = {
    workId: 3, use: 'commercial', media: 'Packaging', printRun: 20000, territory: 'Europe', termMonths: null,
    exclusivity: 'category', licenseeName: 'A Buyer', licenseeOrganisation: '', message: 'Tea tins.',
  };
  it('takes a good enquiry, perpetual or for a number of months', () => {
    expect(enquiryInput.safeParse(enquiry).success).toBe(true);
    expect(enquiryInput.safeParse({ ...enquiry, termMonths: 36, printRun: null }).success).toBe(true);
  });
  it.each([
    ['use', 'advertising'], ['termMonths', 0], ['termMonths', 601], ['termMonths', 1.5], ['printRun', 0], ['printRun', Number.NaN],
    ['exclusivity', 'total'], ['media', '  '], ['licenseeName', ''], ['message', 'x'.repeat(2001)], ['workId', -1],
  ])('refuses an enquiry with %s = %j, naming the field', (field, value) => {
    const parsed = enquiryInput.safeParse({ ...enquiry, [field]: value });
    expect(parsed.success).toBe(false);
    expect(parsed.error!.issues[0]!.path).toEqual([field]);
  });

  const answer = {
    use: 'commercial', media: 'Packaging', cap: 20000, capUnit: 'printed tins', territory: 'Europe', termMonths: 36,
    exclusivity: 'category', terms: 'Use on one tea tin design.', price: '1,250.00', validityDays: 14, reply: '',
  };
  it('converts the answer’s price in the shop currency', () => {
    expect(answerInput('GBP').parse(answer).priceMinor).toBe(125000); // 1250.00 GBP, 2 digits (ISO 4217)
    expect(answerInput('JPY').parse({ ...answer, price: '500' }).priceMinor).toBe(500); // zero-decimal (TRADE-FACTS §3.3)
  });
  it.each([
    ['price', '0'], ['price', '-10'], ['price', '12.345'], ['price', 'ten'], ['validityDays', 0], ['validityDays', 91],
    ['validityDays', 7.5], ['capUnit', null], ['terms', ''],
  ])('refuses an answer with %s = %j', (field, value) => {
    const parsed = answerInput('GBP').safeParse({ ...answer, [field]: value });
    expect(parsed.success).toBe(false);
    expect(parsed.error!.issues.map((i) => i.path.join('.'))).toContain(field);
  });
  it('accepts the validity limits themselves', () => {
    expect(answerInput('GBP').safeParse({ ...answer, validityDays: 1 }).success).toBe(true);
    expect(answerInput('GBP').safeParse({ ...answer, validityDays: 90 }).success).toBe(true);
  });
});

describe('words', () => {
  it('summarises terms on one line and names the custom licence', () => {
    expect(termsSummary({ use: 'commercial', media: 'Packaging', cap: 20000, capUnit: 'tins', territory: 'Europe', termMonths: 24, exclusivity: 'none' }))
      .toBe('Commercial; Packaging; up to 20,000 tins; Europe; 2 years; not exclusive');
    expect(customLicenceName('full').length).toBeLessThanOrEqual(80); // the certificate's tier line holds 80 characters
  });
  it('matches the id shape', () => {
    expect(QUOTE_ID_PATTERN.test('SMQ-ABCDEF-GHJKLM-NPQRST-UVWXYZ')).toBe(true);
    expect(QUOTE_ID_PATTERN.test('SML-ABCDEF-GHJKLM-NPQRST-UVWXYZ')).toBe(false);
    expect(QUOTE_ID_PATTERN.test('SMQ-1')).toBe(false);
  });
});
