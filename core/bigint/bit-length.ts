/**
 * Number of bits of a non-negative bigint (0 for 0n). Variable-time.
 * Throws TypeError for a non-bigint and RangeError for a negative value.
 */
export function bitLength(x: bigint): number {
  if (typeof x !== 'bigint') throw new TypeError(`bitLength: expected bigint, got ${typeof x}`);
  if (x < 0n) throw new RangeError(`bitLength: expected x >= 0, got ${x}`);
  return x === 0n ? 0 : x.toString(2).length;
}
