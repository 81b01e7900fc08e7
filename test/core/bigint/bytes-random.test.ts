import fc from 'fast-check';
import { BigInteger } from 'jsbn';
import { describe, expect, it } from 'vitest';
import { bitLength } from '../../../core/bigint/bit-length.ts';
import { bigintToBytes, bytesToBigint } from '../../../core/bigint/bytes.ts';
import { gcd } from '../../../core/bigint/modular.ts';
import { randomBelow, randomBits, randomUnit } from '../../../core/bigint/random.ts';

const hexOf = (bytes: Uint8Array) => Array.from(bytes, (b) => b.toString(16).padStart(2, '0')).join('');

describe('bytes', () => {
  it('reads big-endian bytes like jsbn parses their hex (fast-check)', () => {
    fc.assert(
      fc.property(fc.uint8Array({ minLength: 1, maxLength: 300 }), (bytes) => {
        const reference = new BigInteger(hexOf(bytes), 16).toString(16);
        return bytesToBigint(bytes).toString(16) === reference;
      }),
      { seed: 20261203 },
    );
    expect(bytesToBigint(new Uint8Array(0))).toBe(0n);
  });

  it('writes fixed width and round-trips (fast-check)', () => {
    fc.assert(
      fc.property(fc.bigInt({ min: 0n, max: 1n << 2100n }), fc.integer({ min: 0, max: 8 }), (x, spare) => {
        const width = Math.max(1, Math.ceil(bitLength(x) / 8)) + spare;
        const bytes = bigintToBytes(x, width);
        return bytes.length === width && bytesToBigint(bytes) === x && (spare === 0 || bytes[0] === 0);
      }),
      { seed: 20261203 },
    );
  });

  it('refuses values that do not fit and bad arguments', () => {
    expect(Array.from(bigintToBytes(255n, 1))).toEqual([255]);
    expect(() => bigintToBytes(256n, 1)).toThrow(/expected x to fit in 1 bytes, got 2 bytes/);
    expect(() => bigintToBytes(-1n, 4)).toThrow(RangeError);
    expect(() => bigintToBytes(1n, 0)).toThrow(/expected integer width >= 1, got 0/);
    expect(() => bigintToBytes(1 as unknown as bigint, 2)).toThrow(TypeError);
  });
});

describe('random', () => {
  it('randomBits stays below 2^bits and reaches the top bit', () => {
    for (const bits of [1, 7, 8, 9, 255, 2048]) {
      let topSeen = false;
      for (let i = 0; i < 64; i++) {
        const x = randomBits(bits);
        expect(x >= 0n && x < 1n << BigInt(bits)).toBe(true);
        if (bitLength(x) === bits) topSeen = true;
      }
      expect(topSeen, `top bit of ${bits}`).toBe(true); // missed with probability 2^-64
    }
  });

  it('randomBelow covers [0, n) and nothing else', () => {
    const seen = new Set<bigint>();
    for (let i = 0; i < 3000; i++) {
      const x = randomBelow(7n);
      expect(x >= 0n && x < 7n).toBe(true);
      seen.add(x);
    }
    expect(seen.size).toBe(7);
    expect(randomBelow(1n)).toBe(0n);
    expect(() => randomBelow(0n)).toThrow(/expected n >= 1, got 0/);
  });

  it('randomUnit gives only units in [1, n)', () => {
    const seen = new Set<bigint>();
    for (let i = 0; i < 3000; i++) {
      const x = randomUnit(15n);
      expect(x >= 1n && x < 15n && gcd(x, 15n) === 1n).toBe(true);
      seen.add(x);
    }
    expect([...seen].sort((a, b) => Number(a - b))).toEqual([1n, 2n, 4n, 7n, 8n, 11n, 13n, 14n]); // units of Z_15
    expect(() => randomUnit(1n)).toThrow(RangeError);
  });

  it('checks randomBits arguments', () => {
    expect(() => randomBits(0)).toThrow(/expected integer bits >= 1, got 0/);
    expect(() => randomBits(1.5)).toThrow(RangeError);
  });
});
