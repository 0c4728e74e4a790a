import type { CaseParams } from './case-schema';
import { sha256Hex } from './sha256';

function canonicalNumber(n: number): string {
  if (!Number.isFinite(n)) throw new Error(`cannot canonicalise non-finite number ${n}`);
  // -0 and 0 mean the same case; JSON.stringify already gives the shortest round-trip form otherwise.
  return Object.is(n, -0) ? '0' : JSON.stringify(n);
}

/**
 * JSON with object keys sorted, no whitespace, -0 written as 0 and undefined members dropped, so equal values
 * give equal text in every runtime. Arrays keep their order.
 */
export function canonicalJson(value: unknown): string {
  if (value === null) return 'null';
  if (typeof value === 'number') return canonicalNumber(value);
  if (typeof value === 'string' || typeof value === 'boolean') return JSON.stringify(value);
  if (Array.isArray(value)) return `[${value.map((v) => (v === undefined ? 'null' : canonicalJson(v))).join(',')}]`;
  if (ArrayBuffer.isView(value)) {
    const numbers: number[] = [];
    const view = value as unknown as ArrayLike<number>;
    for (let i = 0; i < view.length; i++) numbers.push(Number(view[i]));
    return canonicalJson(numbers);
  }
  if (typeof value === 'object') {
    const record = value as Record<string, unknown>;
    const keys = Object.keys(record)
      .filter((k) => record[k] !== undefined)
      .sort();
    return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson(record[k])}`).join(',')}}`;
  }
  throw new Error(`cannot canonicalise a ${typeof value}`);
}

/** Hex SHA-256 of the case's canonical JSON: the identity of a case's numbers. */
export function caseDigest(params: CaseParams): string {
  return sha256Hex(canonicalJson(params));
}

/** Hex SHA-256 of any JSON-like value's canonical form (run settings, summaries). */
export function valueDigest(value: unknown): string {
  return sha256Hex(canonicalJson(value));
}
