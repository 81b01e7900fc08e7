import { sha256 } from '@noble/hashes/sha2.js';
import { bytesToHex } from '@noble/hashes/utils.js';
import { bitLength } from '../bigint/bit-length.ts';
import { bigintToBytes } from '../bigint/bytes.ts';

/**
 * The name a server keeps a proven modulus by: lower-case hex SHA-256 of n in its canonical wire
 * bytes (big-endian, ceil(bitLength(n) / 8) bytes, as core/pir/WIRE.md writes it). A body whose
 * header pads n with extra zero bytes still names the same modulus. Throws RangeError for n < 1.
 */
export function modulusFingerprint(n: bigint): string {
  if (typeof n !== 'bigint' || n < 1n) throw new RangeError(`modulusFingerprint: expected a modulus >= 1, got ${String(n)}`);
  return bytesToHex(sha256(bigintToBytes(n, Math.ceil(bitLength(n) / 8))));
}
