import { sha256 } from '@noble/hashes/sha2.js';
import { bitLength } from '../bigint/bit-length.ts';
import { bigintToBytes, bytesToBigint } from '../bigint/bytes.ts';

/** Domain tag of the challenge hash: a new proof version gets a new tag. */
const CHALLENGE_TAG = 'nearveil modulus proof v1: challenges';
const DIGEST_BYTES = 32;

/**
 * The challenges of a modulus proof: x_0, x_1, ... in [1, n), each uniform and independent when
 * SHA-256 is modelled as a random oracle. Derivation (both sides run exactly this):
 *   seed = SHA-256(tag || 0x00 || u16 k || n || c || d), every number k = byte width of n bytes;
 *   candidate t (t = 0, 1, ...) = the first k bytes of SHA-256(seed || u32 t || u16 0) ||
 *   SHA-256(seed || u32 t || u16 1) || ..., its bits above bitLength(n) cleared;
 *   the challenges are the candidates in [1, n), in order (rejection sampling: exactly uniform).
 * n, c and d are all in the hash, so a prover who changes any of them gets new challenges, and
 * the verifier derives the list itself: no challenge can be skipped, reordered or chosen.
 * Since n >= 2^(bits-1), at least half the candidates are kept; after MAX_CANDIDATES(count)
 * candidates (a 2^-200 event) it gives up with RangeError. SHA-256 from @noble/hashes (audited,
 * synchronous: about 1,200 digests at 2048 bits, each far cheaper than a WebCrypto round trip).
 * Throws RangeError when n < 3, count is not an integer >= 1, or c, d do not fit in k bytes.
 */
export function deriveChallenges(n: bigint, c: bigint, d: bigint, count: number): bigint[] {
  if (typeof n !== 'bigint' || n < 3n) throw new RangeError(`deriveChallenges: expected n >= 3, got ${String(n)}`);
  if (!Number.isSafeInteger(count) || count < 1) throw new RangeError(`deriveChallenges: expected integer count >= 1, got ${count}`);
  const bits = bitLength(n);
  const k = Math.ceil(bits / 8);
  const tag = new TextEncoder().encode(CHALLENGE_TAG);
  const head = new Uint8Array(tag.length + 3 + 3 * k);
  head.set(tag, 0);
  new DataView(head.buffer).setUint16(tag.length + 1, k);
  [n, c, d].forEach((x, i) => head.set(bigintToBytes(x, k), tag.length + 3 + i * k));
  const seed = sha256(head);
  const blocks = Math.ceil(k / DIGEST_BYTES);
  const topMask = 0xff >>> (8 * k - bits);
  const input = new Uint8Array(DIGEST_BYTES + 6);
  input.set(seed, 0);
  const view = new DataView(input.buffer);
  const out: bigint[] = [];
  for (let t = 0; out.length < count; t++) {
    if (t >= maxCandidates(count)) throw new RangeError(`deriveChallenges: expected ${count} challenges within ${maxCandidates(count)} candidates`);
    view.setUint32(DIGEST_BYTES, t);
    const candidate = new Uint8Array(blocks * DIGEST_BYTES);
    for (let b = 0; b < blocks; b++) {
      view.setUint16(DIGEST_BYTES + 4, b);
      candidate.set(sha256(input), b * DIGEST_BYTES);
    }
    const bytes = candidate.subarray(0, k);
    bytes[0] = bytes[0]! & topMask;
    const x = bytesToBigint(bytes);
    if (x >= 1n && x < n) out.push(x);
  }
  return out;
}

/** Candidates tried before giving up: each is kept with probability >= 1/2. */
function maxCandidates(count: number): number {
  return 4 * count + 256;
}
