import { describe, expect, it } from 'vitest';
import { fieldDisplay, formatAngle, formatLength, formatNumber, formatPercent, outcomeWords } from './display';

describe('display', () => {
  it('shows SI values in mm, Hz and ° with their unit', () => {
    expect(formatLength(0.0125)).toBe('12.5 mm');
    expect(formatAngle(Math.PI / 2)).toBe('90°');
    expect(formatLength(null)).toBe('—');
  });

  it('writes numbers without float noise and with a true minus sign', () => {
    expect(formatNumber(0.1 + 0.2)).toBe('0.3');
    expect(formatNumber(-2.5)).toBe('−2.5');
    expect(formatNumber(Infinity)).toBe('∞');
    expect(formatPercent(-3.21)).toBe('−3.21 %');
    expect(formatPercent(12.3456)).toBe('+12.3 %');
  });

  it('names swept fields and outcomes in words', () => {
    expect(fieldDisplay('drive.amplitude')).toEqual({ label: 'Drive amplitude', unit: { unit: 'mm', scale: 1000 } });
    expect(fieldDisplay('damping.viscousRatio').unit.unit).toBe('');
    expect(outcomeWords('holds-upright')).toBe('holds upright');
    expect(outcomeWords(null)).toBe('no valid case');
  });
});
