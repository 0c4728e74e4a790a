/**
 * The compact, lossless text form of a run result, as stored with a run and sent to the browser.
 *
 * Encoding `qp-result-json/1`: the RunResult (`{ kind, value }`) as JSON, with two tagged objects that plain JSON
 * cannot hold:
 * - a Float64Array is `{ "$f64": "<base64 of its bytes, little-endian IEEE 754 doubles>" }` (8 bytes a value, so a
 *   200x200 chart's multipliers are 427 kB of text and every bit survives the round trip);
 * - a non-finite number is `{ "$num": "Infinity" | "-Infinity" | "NaN" }`.
 * Everything else (outcome words, cell objects, thresholds) is ordinary JSON. The server stores this text
 * gzip-compressed and serves it with `Content-Encoding: gzip`; the digest is computed from the decoded numbers
 * (run-record.ts), so encoding never moves a digest.
 */
import type { RunResult } from './run-record';

export const RESULT_ENCODING = 'qp-result-json/1';

const ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/';
const ENCODE = Uint8Array.from(ALPHABET, (c) => c.charCodeAt(0));
const DECODE = new Int16Array(128).fill(-1);
ENCODE.forEach((code, i) => (DECODE[code] = i));
const PAD = 61; // '='
/** Characters turned into a string at a time where no TextDecoder exists (the argument limit of fromCharCode). */
const CHUNK = 0x2000;
// TextDecoder is in every runtime we target (browsers, workers, Node) but not in this folder's ES-only lib.
const TextDecoderCtor = (globalThis as { TextDecoder?: new () => { decode(bytes: Uint8Array): string } }).TextDecoder;
const asciiDecoder = TextDecoderCtor ? new TextDecoderCtor() : null;

function charsToString(chars: Uint8Array): string {
  if (asciiDecoder) return asciiDecoder.decode(chars);
  const parts: string[] = [];
  for (let i = 0; i < chars.length; i += CHUNK) parts.push(String.fromCharCode.apply(null, Array.from(chars.subarray(i, i + CHUNK))));
  return parts.join('');
}

/** Standard base64 (RFC 4648 section 4, with padding) of a byte array. */
export function bytesToBase64(bytes: Uint8Array): string {
  const out = new Uint8Array(Math.ceil(bytes.length / 3) * 4);
  let o = 0;
  for (let i = 0; i < bytes.length; i += 3) {
    const rest = bytes.length - i;
    const n = (bytes[i] << 16) | ((rest > 1 ? bytes[i + 1] : 0) << 8) | (rest > 2 ? bytes[i + 2] : 0);
    out[o++] = ENCODE[(n >> 18) & 63];
    out[o++] = ENCODE[(n >> 12) & 63];
    out[o++] = rest > 1 ? ENCODE[(n >> 6) & 63] : PAD;
    out[o++] = rest > 2 ? ENCODE[n & 63] : PAD;
  }
  return charsToString(out);
}

/** Bytes of standard base64 text; throws on characters outside the alphabet or a bad length. */
export function base64ToBytes(text: string): Uint8Array {
  if (text.length % 4 !== 0) throw new Error('base64 text length must be a multiple of 4');
  const padding = text.endsWith('==') ? 2 : text.endsWith('=') ? 1 : 0;
  const out = new Uint8Array((text.length / 4) * 3 - padding);
  const body = text.length - padding;
  let o = 0;
  for (let i = 0; i < text.length; i += 4) {
    let n = 0;
    for (let j = 0; j < 4; j++) {
      const k = i + j;
      const code = text.charCodeAt(k);
      const v = k >= body ? 0 : code < 128 ? DECODE[code] : -1;
      if (v < 0) throw new Error(`not a base64 character: ${text[k]}`);
      n = (n << 6) | v;
    }
    out[o++] = (n >> 16) & 255;
    if (o < out.length) out[o++] = (n >> 8) & 255;
    if (o < out.length) out[o++] = n & 255;
  }
  return out;
}

function float64ToBase64(values: Float64Array): string {
  const bytes = new Uint8Array(values.length * 8);
  const view = new DataView(bytes.buffer);
  values.forEach((v, i) => view.setFloat64(i * 8, v, true));
  return bytesToBase64(bytes);
}

function base64ToFloat64(text: string): Float64Array {
  const bytes = base64ToBytes(text);
  if (bytes.length % 8 !== 0) throw new Error('a $f64 array must hold whole 8-byte values');
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const out = new Float64Array(bytes.length / 8);
  for (let i = 0; i < out.length; i++) out[i] = view.getFloat64(i * 8, true);
  return out;
}

/** The encoded text of a run result. */
export function encodeRunResult(result: RunResult): string {
  return JSON.stringify(result, (_key, value: unknown) => {
    if (value instanceof Float64Array) return { $f64: float64ToBase64(value) };
    if (typeof value === 'number' && !Number.isFinite(value)) return { $num: String(value) };
    return value;
  });
}

/** A run result from its encoded text; throws when the text is not that encoding. */
export function decodeRunResult(text: string): RunResult {
  const value: unknown = JSON.parse(text, (_key, v: unknown) => {
    if (typeof v !== 'object' || v === null || Array.isArray(v)) return v;
    const keys = Object.keys(v);
    if (keys.length !== 1) return v;
    const tagged = v as Record<string, unknown>;
    if (typeof tagged['$f64'] === 'string') return base64ToFloat64(tagged['$f64']);
    const num = tagged['$num'];
    if (num === 'Infinity' || num === '-Infinity' || num === 'NaN') return Number(num);
    return v;
  });
  if (typeof value !== 'object' || value === null || typeof (value as { kind?: unknown }).kind !== 'string' || !('value' in value)) {
    throw new Error(`not a ${RESULT_ENCODING} run result`);
  }
  return value as RunResult;
}
