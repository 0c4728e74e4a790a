/**
 * SHA-256 (FIPS 180-4) by @noble/hashes, audited and synchronous, so browser, worker and Node compute the same
 * digest. Strings are encoded as UTF-8 (a lone surrogate becomes U+FFFD, as TextEncoder does).
 */
import { sha256 } from '@noble/hashes/sha2.js';
import { bytesToHex, utf8ToBytes } from '@noble/hashes/utils.js';

/** Hex SHA-256 of a UTF-8 string or of raw bytes. */
export function sha256Hex(input: string | Uint8Array): string {
  return bytesToHex(sha256(typeof input === 'string' ? utf8ToBytes(input) : input));
}
