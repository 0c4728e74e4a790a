import { describe, expect, it } from 'vitest';

import * as pm from './portable-math';

/** Distance in units in the last place between two doubles of the same sign. */
function ulps(a: number, b: number): number {
  const view = new DataView(new ArrayBuffer(16));
  view.setFloat64(0, a);
  view.setFloat64(8, b);
  return Number(view.getBigInt64(0) - view.getBigInt64(8));
}

const ARGUMENTS = Array.from({ length: 20_000 }, (_, i) => -25 + i * 0.0025013);

describe('portable elementary functions', () => {
  // Both sides are faithfully rounded (error below 1 ulp; fdlibm's own comments, from memory, give tanh below
  // 2.5 ulp), so they agree within 1 ulp, tanh within 2. The point: the same numbers, only the last bit may move.
  it.each([
    ['sin', pm.sin, Math.sin, 1],
    ['cos', pm.cos, Math.cos, 1],
    ['exp', (x: number) => pm.exp(x / 5), (x: number) => Math.exp(x / 5), 1],
    ['log', (x: number) => pm.log(Math.abs(x) + 1e-3), (x: number) => Math.log(Math.abs(x) + 1e-3), 1],
    ['pow', (x: number) => pm.pow(Math.abs(x) + 0.1, 1.37), (x: number) => Math.pow(Math.abs(x) + 0.1, 1.37), 1],
    ['atan2', (x: number) => pm.atan2(x, 0.7), (x: number) => Math.atan2(x, 0.7), 1],
    ['hypot', (x: number) => pm.hypot(x, 0.3), (x: number) => Math.hypot(x, 0.3), 1],
    ['tanh', pm.tanh, Math.tanh, 2],
  ] as const)('%s agrees with the runtime within its ulp limit', (_name, portable, native, limit) => {
    const worst = Math.max(...ARGUMENTS.map((x) => Math.abs(ulps(portable(x), native(x)))));
    expect(worst).toBeLessThanOrEqual(limit);
  });

  it('keeps the exact special values', () => {
    expect(pm.sin(0)).toBe(0);
    expect(pm.cos(0)).toBe(1);
    expect(pm.exp(0)).toBe(1);
    expect(pm.log(1)).toBe(0);
    expect(pm.pow(2, 10)).toBe(1024);
    expect(pm.pow(3, 2)).toBe(9);
    expect(pm.atan2(0, 1)).toBe(0);
    expect(pm.hypot(3, 4)).toBe(5);
    expect(Number.isNaN(pm.log(-1))).toBe(true);
  });
});

describe('engine sources', () => {
  it('call no native transcendental function (they differ between runtimes; use portable-math)', async () => {
    const { readdirSync, readFileSync } = await import('node:fs');
    const { join } = await import('node:path');
    const native = /\bMath\.(sin|cos|tan|asin|acos|atan|atan2|sinh|cosh|tanh|exp|expm1|log|log1p|log2|log10|pow|hypot|cbrt)\b/;
    const offenders = readdirSync(__dirname)
      .filter((name) => name.endsWith('.ts') && !name.endsWith('.spec.ts'))
      .filter((name) => native.test(readFileSync(join(__dirname, name), 'utf8').replace(/\/\*[\s\S]*?\*\/|\/\/.*$/gm, '')));
    expect(offenders).toEqual([]);
  });
});
