import { describe, expect, it } from 'vitest';
import { canonicalJson, caseDigest } from './canonical';
import { templateCase } from './templates';

describe('canonicalJson', () => {
  it('sorts keys at every depth and drops undefined members', () => {
    expect(canonicalJson({ b: 1, a: { d: [3, { z: 1, y: 2 }], c: undefined } })).toBe('{"a":{"d":[3,{"y":2,"z":1}]},"b":1}');
  });

  it('writes -0 as 0 and refuses non-finite numbers', () => {
    expect(canonicalJson({ x: -0 })).toBe('{"x":0}');
    expect(() => canonicalJson({ x: Number.NaN })).toThrow(/non-finite/);
  });
});

describe('caseDigest', () => {
  it('is the same for the same case written with keys in another order', () => {
    const a = templateCase();
    const b = JSON.parse(JSON.stringify({ run: a.run, gravity: a.gravity, start: a.start, damping: a.damping, drive: a.drive, body: a.body, schemaVersion: 1 }));
    expect(caseDigest(b)).toBe(caseDigest(a));
    expect(caseDigest(a)).toMatch(/^[0-9a-f]{64}$/);
  });

  it('changes when any number changes', () => {
    const a = templateCase();
    const b = { ...a, drive: { ...a.drive, amplitude: a.drive.amplitude * (1 + 1e-12) } };
    expect(caseDigest(b)).not.toBe(caseDigest(a));
  });
});
