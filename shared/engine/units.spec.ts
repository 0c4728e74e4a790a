import { describe, expect, it } from 'vitest';
import { convert, degToRad, fromSi, hzToRpm, radToDeg, toSi } from './units';

describe('units', () => {
  it('converts within a dimension and round-trips', () => {
    expect(convert(20, 'mm', 'cm')).toBeCloseTo(2, 12);
    expect(convert(16.5, 'Hz', 'rpm')).toBeCloseTo(990, 10);
    expect(convert(1, 'g', 'm/s2')).toBeCloseTo(9.80665, 12);
    expect(fromSi(toSi(37.5, 'deg'), 'deg')).toBeCloseTo(37.5, 12);
    expect(radToDeg(degToRad(123.4))).toBeCloseTo(123.4, 12);
    expect(hzToRpm(1)).toBeCloseTo(60, 12);
  });

  it('refuses to convert across dimensions or unknown units', () => {
    expect(() => convert(1, 'mm', 'Hz')).toThrow(/cannot convert/);
    expect(() => convert(1, 'furlong', 'm')).toThrow(/unknown unit/);
  });
});
