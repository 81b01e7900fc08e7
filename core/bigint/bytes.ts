/**
 * Fixed-width big-endian encoding of a non-negative bigint (`width` bytes, zero-padded on the
 * left). Variable-time. Throws TypeError for wrong types, RangeError when x < 0, width is not an
 * integer >= 1, or x does not fit in `width` bytes.
 */
export function bigintToBytes(x: bigint, width: number): Uint8Array {
  if (typeof x !== 'bigint') throw new TypeError(`bigintToBytes: expected bigint x, got ${typeof x}`);
  if (!Number.isSafeInteger(width) || width < 1) {
    throw new RangeError(`bigintToBytes: expected integer width >= 1, got ${width}`);
  }
  if (x < 0n) throw new RangeError(`bigintToBytes: expected x >= 0, got ${x}`);
  const hex = x.toString(16);
  if (hex.length > width * 2) {
    throw new RangeError(`bigintToBytes: expected x to fit in ${width} bytes, got ${Math.ceil(hex.length / 2)} bytes`);
  }
  const padded = hex.padStart(width * 2, '0');
  const out = new Uint8Array(width);
  for (let i = 0; i < width; i++) out[i] = parseInt(padded.slice(2 * i, 2 * i + 2), 16);
  return out;
}

/** Big-endian bytes to a non-negative bigint; empty input gives 0n. Variable-time. */
export function bytesToBigint(bytes: Uint8Array): bigint {
  if (!(bytes instanceof Uint8Array)) throw new TypeError(`bytesToBigint: expected Uint8Array, got ${typeof bytes}`);
  if (bytes.length === 0) return 0n;
  let hex = '';
  for (const b of bytes) hex += b.toString(16).padStart(2, '0');
  return BigInt('0x' + hex);
}
