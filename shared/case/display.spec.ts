import { describe, expect, it } from 'vitest';
import { chainLinkWords, fieldDisplay, formatAngle, formatLength, formatNumber, formatPercent, outcomeWords } from './display';

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

describe('chainLinkWords', () => {
  it('says a link in shown units, with its bend only when it has one', () => {
    expect(chainLinkWords({ kind: 'rod-bob', rodLength: 0.3, rodMass: 0.2, bobMass: 0.05, bobRadius: 0.01, bobDistance: 0.28, jointDamping: 0.001 }, 0)).toBe(
      'Link 1: rod 300 mm, 0.2 kg, bob 0.05 kg (radius 10 mm) at 280 mm; joint damping 0.001 N·m·s/rad',
    );
    expect(chainLinkWords({ kind: 'point-mass', length: 0.1, mass: 0.05, jointDamping: 0, startBend: -0.04, startBendRate: 0.5 }, 2)).toBe(
      'Link 3: point mass 0.05 kg at 100 mm; joint damping 0 N·m·s/rad; starts bent −2.292° turning 28.65 °/s',
    );
  });
});
