import { BigInteger } from 'jsbn';
import { beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../../core/errors/input-error.ts';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { validateQuery } from '../../../core/pir/validate.ts';

let key: PirKeyPair;
beforeAll(async () => {
  key = await generateKeyPair({ modulusBits: 2048 });
});

function caught(f: () => void): InputError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error('expected an InputError, nothing was thrown');
}

const big = (x: bigint) => new BigInteger(x.toString(16), 16);
/** Legendre symbol by Euler's criterion with jsbn (outside reference). */
const euler = (a: bigint, p: bigint): number => {
  const r = BigInt('0x' + big(a).modPow(big((p - 1n) / 2n), big(p)).toString(16));
  return r === 1n ? 1 : r === 0n ? 0 : -1;
};

describe('validateQuery', () => {
  it('accepts an honest query', () => {
    expect(() => validateQuery(key.n, makeQuery(key, 5, 2), 5)).not.toThrow();
  });

  it('modulus_even', () => {
    const e = caught(() => validateQuery(key.n + 1n, makeQuery(key, 2, 0), 2));
    expect([e.code, e.field, e.status]).toEqual(['modulus_even', 'modulus', 400]);
  });

  it.each([
    ['1024-bit', 1024],
    ['2047-bit', 2047],
    ['2049-bit', 2049],
    ['4096-bit', 4096],
  ])('modulus_size for a %s modulus', (_label, bits) => {
    const n = (1n << BigInt(bits - 1)) + 1n;
    const e = caught(() => validateQuery(n, [1n], 1));
    expect([e.code, e.field]).toEqual(['modulus_size', 'modulus']);
    expect(e.message).toBe(`modulus: expected exactly 2048 or 3072 bits, got ${bits}`);
  });

  it('value_count says expected and got', () => {
    const e = caught(() => validateQuery(key.n, makeQuery(key, 4, 0), 5));
    expect([e.code, e.field]).toEqual(['value_count', 'values']);
    expect(e.message).toMatch(/expected 5 values .* got 4/);
  });

  it.each([
    ['zero', (_n: bigint) => 0n],
    ['negative', (_n: bigint) => -3n],
    ['equal to n', (n: bigint) => n],
    ['above n', (n: bigint) => n + 4n],
  ])('value_range for a value %s, naming its index', (_label, make) => {
    const values = makeQuery(key, 4, 1);
    values[2] = make(key.n);
    const e = caught(() => validateQuery(key.n, values, 4));
    expect([e.code, e.field]).toEqual(['value_range', 'values[2]']);
  });

  it('value_jacobi for a value of Jacobi symbol -1 and for one sharing a factor with n', () => {
    let y = 2n;
    while (euler(y, key.p) * euler(y, key.q) !== -1) y++;
    const values = makeQuery(key, 3, 0);
    values[1] = y;
    let e = caught(() => validateQuery(key.n, values, 3));
    expect([e.code, e.field]).toEqual(['value_jacobi', 'values[1]']);
    expect(e.message).toMatch(/got -1$/);

    values[1] = makeQuery(key, 3, 0)[1]!;
    values[2] = key.q;
    e = caught(() => validateQuery(key.n, values, 3));
    expect([e.code, e.field]).toEqual(['value_jacobi', 'values[2]']);
    expect(e.message).toMatch(/got 0$/);
  });

  it('accepts a non-residue of Jacobi +1, which it cannot tell from a residue (the whole point)', () => {
    const values = makeQuery(key, 3, 0);
    values[2] = key.w;
    expect(() => validateQuery(key.n, values, 3)).not.toThrow();
  });
});
