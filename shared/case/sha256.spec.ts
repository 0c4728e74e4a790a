import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { sha256Hex } from './sha256';

const nodeSha = (input: string | Uint8Array) => createHash('sha256').update(input).digest('hex');

describe('sha256Hex', () => {
  it('matches the FIPS 180-4 example digests of "abc" and of the two-block 448-bit message', () => {
    expect(sha256Hex('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(sha256Hex('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq')).toBe(
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    );
  });

  it("matches Node's crypto for empty, multi-block, block-boundary and non-ASCII input", () => {
    const inputs = ['', 'a'.repeat(55), 'a'.repeat(56), 'b'.repeat(64), 'x'.repeat(1000), 'θ'.repeat(33) + '→ 🚀 ok', '{"k":1.5e-9}', 'lone \ud800 surrogate'];
    for (const input of inputs) expect(sha256Hex(input), JSON.stringify(input.slice(0, 20))).toBe(nodeSha(input));
  });

  it("matches Node's crypto on raw bytes", () => {
    const bytes = Uint8Array.from({ length: 300 }, (_, i) => (i * 37 + 11) & 255);
    expect(sha256Hex(bytes)).toBe(nodeSha(bytes));
  });
});
