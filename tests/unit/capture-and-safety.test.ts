import { describe, expect, it } from 'vitest';
import { captureLines, formatAperture, formatExposure } from '../../src/lib/capture';
import { safetyCautions } from '../../src/lib/safety';

describe('capture notes', () => {
  it('writes shutter speeds in the usual reciprocal notation', () => {
    // EXIF ExposureTime is in seconds (CIPA DC-008 tag 0x829A); 1/125 s = 0.008 s
    expect(formatExposure(0.008)).toBe('1/125 s');
    // 1/60 s is stored as 0.016666… (common practice to round the denominator)
    expect(formatExposure(1 / 60)).toBe('1/60 s');
    expect(formatExposure(2)).toBe('2 s');
    expect(formatExposure(1.5)).toBe('1.5 s');
    expect(() => formatExposure(0)).toThrow(RangeError);
  });

  it('writes apertures as f-numbers', () => {
    // ISO 517 nominal full stops are marked f/5.6, f/8, f/11 (TRADE-FACTS §5.1)
    expect(formatAperture(5.6)).toBe('f/5.6');
    expect(formatAperture(11)).toBe('f/11');
  });

  it('lists only the fields that are present', () => {
    const lines = captureLines({ exposureTime: 0.008, fNumber: 11, iso: 100 });
    expect(lines.map((l) => l.label)).toEqual(['Exposure', 'Aperture', 'ISO']);
    expect(captureLines({})).toEqual([]);
  });
});

describe('safety cautions', () => {
  it('adds the flash caution when a note mentions studio flash', () => {
    expect(safetyCautions('Lit with two studio flash heads.').map((c) => c.hazard)).toEqual(['studio flash']);
  });
  it('adds one caution per hazard mentioned', () => {
    const hazards = safetyCautions('A knife, a tungsten lamp and a long extension lead.').map((c) => c.hazard);
    expect(hazards.sort()).toEqual(['hot lights', 'mains power', 'sharp tools']);
  });
  it('adds nothing to a note without hazards', () => {
    expect(safetyCautions('Three pears on a linen cloth.')).toEqual([]);
  });
});
