import { describe, expect, it } from 'vitest';
import { normaliseTracking, s10CheckDigit } from '../../src/lib/tracking';

describe('tracking numbers', () => {
  it('computes the UPU S10 check digit', () => {
    // UPU S10 worked example "RR 123 456 785 GB": serial 12345678 → check digit 5 (from memory)
    expect(s10CheckDigit('12345678')).toBe(5);
    // 8·0+6·0+4·0+2·0+3·0+5·0+9·0+7·1 = 7 → 11 − 7 = 4 (S10 rule, arithmetic)
    expect(s10CheckDigit('00000001')).toBe(4);
    // sum 0 → 11 − 0 = 11 → 5 (S10 rule)
    expect(s10CheckDigit('00000000')).toBe(5);
  });
  it('accepts a Royal Mail S10 number only with the right check digit', () => {
    expect(normaliseTracking('royal-mail', 'rr 123 456 785 gb')).toBe('RR123456785GB');
    expect(normaliseTracking('royal-mail', 'RR123456784GB')).toBeNull();
    expect(normaliseTracking('royal-mail', 'RR12345678GB')).toBeNull();
  });
  it('checks the other carriers by shape', () => {
    expect(normaliseTracking('ups', '1Z999AA10123456784')).toBe('1Z999AA10123456784'); // from memory
    expect(normaliseTracking('ups', '2Z999AA10123456784')).toBeNull();
    expect(normaliseTracking('dhl-express', '1234567890')).toBe('1234567890'); // from memory
    expect(normaliseTracking('dhl-express', '123456789')).toBeNull();
    expect(normaliseTracking('other', '<script>')).toBeNull();
  });
});
