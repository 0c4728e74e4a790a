import { DEFAULT_UNITS } from './display-units';
import { formatBound, formatIn, formatNumber, formatPercent } from './format-number';

describe('formatNumber', () => {
  it('gives four significant digits by default, without float noise or trailing zeros', () => {
    expect(formatNumber(0.1 + 0.2)).toBe('0.3');
    expect(formatNumber(1 / 3)).toBe('0.3333');
    expect(formatNumber(1 / 3, 6)).toBe('0.333333');
    expect(formatNumber(-0)).toBe('0');
    expect(formatNumber(-2.5)).toBe('−2.5');
  });

  it('writes very large and very small numbers with an exponent, and missing ones as a dash', () => {
    expect(formatNumber(3.152e32)).toBe('3.152e+32');
    expect(formatNumber(1.5e-7)).toBe('1.5e-7');
    expect(formatNumber(null)).toBe('—');
    expect(formatNumber(Number.NaN)).toBe('—');
    expect(formatNumber(Number.POSITIVE_INFINITY)).toBe('∞');
  });
});

describe('formatIn and formatPercent', () => {
  it('shows an SI value in the display unit with the unit', () => {
    expect(formatIn(0.00678, 'length', DEFAULT_UNITS)).toBe('6.78 mm');
    expect(formatIn(Math.PI / 2, 'angle', DEFAULT_UNITS)).toBe('90°');
    expect(formatIn(1, 'frequency', { ...DEFAULT_UNITS, frequency: 'rpm' })).toBe('60 rev/min');
  });

  it('signs percentages', () => {
    expect(formatPercent(3.198)).toBe('+3.2 %');
    expect(formatPercent(-12.34)).toBe('−12.3 %');
  });
});

describe('formatBound', () => {
  it('rounds a lower limit up and an upper limit down, so the shown limit is itself allowed', () => {
    expect(formatBound('>=', 0.11144625, 'frequency', DEFAULT_UNITS)).toBe('at least 0.1115 Hz');
    expect(formatBound('<=', 0.0123456, 'length', DEFAULT_UNITS)).toBe('at most 12.34 mm');
    expect(formatBound('<=', 10, 'length', DEFAULT_UNITS)).toBe('at most 10000 mm');
    expect(formatBound('>', 0, 'plain', DEFAULT_UNITS, 'kg')).toBe('more than 0 kg');
  });
});
