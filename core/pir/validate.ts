import { bitLength } from '../bigint/bit-length.ts';
import { jacobi } from '../bigint/jacobi.ts';
import { bigintToBytes } from '../bigint/bytes.ts';
import { InputError } from '../errors/input-error.ts';
import type { WireNumbers } from './wire.ts';
import { ALLOWED_MODULUS_BITS, isAllowedModulusBits, type ModulusBits } from './params.ts';

/**
 * The size checks of a modulus, shared by queries and modulus proofs; returns its bit length.
 * Throws InputError `modulus_even` or `modulus_size` (field "modulus", status 400).
 */
export function validateModulus(n: bigint): ModulusBits {
  if ((n & 1n) === 0n) throw new InputError('modulus_even', 'modulus', 'modulus: expected an odd number, got an even one');
  const bits = bitLength(n);
  if (!isAllowedModulusBits(bits)) {
    throw new InputError('modulus_size', 'modulus', `modulus: expected exactly ${ALLOWED_MODULUS_BITS.join(' or ')} bits, got ${bits}`);
  }
  return bits;
}

/**
 * The server's check of a decoded query before answering it. Throws InputError (status 400):
 * - `modulus_even` (field "modulus"): n is even;
 * - `modulus_size` (field "modulus"): n's exact bit length is not one of ALLOWED_MODULUS_BITS;
 * - `value_count` (field "values"): values.length != expectedColumns;
 * - `value_range` (field "values[j]"): not 1 <= y_j < n;
 * - `value_jacobi` (field "values[j]"): Jacobi(y_j, n) != +1.
 * Values are checked in order and the first bad one is reported. Cost: one Jacobi symbol per
 * value (binary algorithm, about as much as a few multiplications of the answer), so a query is
 * checked in far less time than it takes to answer. Variable-time (all inputs are public).
 */
export function validateQuery(n: bigint, values: readonly bigint[], expectedColumns: number): void {
  validateModulus(n);
  if (values.length !== expectedColumns) {
    throw new InputError('value_count', 'values', `values: expected ${expectedColumns} values (one per matrix column), got ${values.length}`);
  }
  for (let j = 0; j < values.length; j++) {
    const y = values[j]!;
    if (y < 1n || y >= n) {
      throw new InputError('value_range', `values[${j}]`, `values[${j}]: expected 1 <= value < modulus, got ${y < 1n ? String(y) : 'a value >= modulus'}`);
    }
    const symbol = jacobi(y, n);
    if (symbol !== 1) {
      throw new InputError('value_jacobi', `values[${j}]`, `values[${j}]: expected Jacobi symbol +1 modulo the modulus, got ${symbol}`);
    }
  }
}

/**
 * validateQuery's size and range checks on values still in their wire bytes (no BigInt per
 * value): the modulus, the count, and 1 <= y_j < n by comparing big-endian bytes with n's. The
 * same errors, in the same order. The Jacobi symbols are checked apart (jacobi-batch.ts).
 * Requires values of n's byte width (decodeQueryWire gives that). Variable-time (public input).
 */
export function validateQueryRanges(n: bigint, values: WireNumbers, expectedColumns: number): void {
  validateModulus(n);
  if (values.count !== expectedColumns) {
    throw new InputError('value_count', 'values', `values: expected ${expectedColumns} values (one per matrix column), got ${values.count}`);
  }
  const width = values.width;
  const nBytes = bigintToBytes(n, width);
  const { bytes } = values;
  for (let j = 0; j < values.count; j++) {
    const at = values.offset + j * width;
    let zero = true;
    let order = 0; // -1: y < n, 1: y > n, 0: equal so far
    for (let i = 0; i < width; i++) {
      const b = bytes[at + i]!;
      if (b !== 0) zero = false;
      if (order === 0 && b !== nBytes[i]) order = b < nBytes[i]! ? -1 : 1;
    }
    if (zero || order >= 0) {
      throw new InputError('value_range', `values[${j}]`, `values[${j}]: expected 1 <= value < modulus, got ${zero ? '0' : 'a value >= modulus'}`);
    }
  }
}
