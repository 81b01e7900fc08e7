import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import { createMontgomeryKernel, kernelBitsFor } from '../../../core/montgomery/kernel.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { back, big, jsbnProduct, operand, products } from './kernel-products.ts';

// Outside references: native BigInt `(a * b) % n` and jsbn (an independent big-integer library,
// multiply then mod). Every kernel result below is compared with one or both.

let module: WebAssembly.Module;
beforeAll(async () => {
  module = await loadKernelModuleNode(2048);
});

/** Odd moduli of exactly `bits` bits (top bit set). */
const oddModulus = (bits: number) =>
  fc.bigInt({ min: 1n << BigInt(bits - 1), max: (1n << BigInt(bits)) - 1n }).map((n) => n | 1n);

for (const bits of [2048, 3072] as const) {
  describe(`Montgomery kernel, ${bits}-bit moduli`, () => {
    it('matches BigInt (a * b) % n and jsbn on random moduli and operands, counts 1 to 13 (fast-check)', () => {
      fc.assert(
        fc.property(
          oddModulus(bits).chain((n) => fc.tuple(fc.constant(n), fc.array(fc.tuple(operand(n), operand(n)), { minLength: 1, maxLength: 13 }))),
          ([n, pairs]) => {
            expect(kernelBitsFor(n)).toBe(bits);
            const got = products(createMontgomeryKernel(module, n), pairs);
            pairs.forEach(([a, b], i) => {
              expect(got[i]).toBe((a * b) % n); // reference: BigInt
              expect(got[i]).toBe(jsbnProduct(a, b, n)); // reference: jsbn
            });
          },
        ),
        { numRuns: bits === 2048 ? 25 : 15, seed: 20261203 },
      );
    });

    it('handles the extreme moduli 2^bits - 1 and 2^(bits-1) + 1 with edge operands', () => {
      for (const n of [(1n << BigInt(bits)) - 1n, (1n << BigInt(bits - 1)) + 1n]) {
        const edges = [0n, 1n, 2n, n - 1n, n - 2n, n >> 1n];
        const pairs = edges.flatMap((a) => edges.map((b) => [a, b] as [bigint, bigint]));
        const got = products(createMontgomeryKernel(module, n), pairs);
        pairs.forEach(([a, b], i) => expect(got[i]).toBe((a * b) % n)); // reference: BigInt
        // (n-1)^2 = 1 mod n, by algebra; cross-checked with jsbn.
        expect(got[pairs.findIndex(([a, b]) => a === n - 1n && b === n - 1n)]).toBe(jsbnProduct(n - 1n, n - 1n, n));
      }
    });

    it('sums without lane overflow when Montgomery-form limbs and modulus limbs are near their maximum', () => {
      // n just below 2^bits has its limbs at their maximum (but the lowest few); x = m / R mod n is
      // stored as m, so with m just below n both operands and the modulus present maximal limbs to
      // every column sum, while the low bits keep the reduction digits q varied.
      const n = (1n << BigInt(bits)) - 1n - (0x9e3779b97f4a7c15n << 1n);
      const limbBits = (new WebAssembly.Instance(module, {}).exports.limbBits as WebAssembly.Global).value as number;
      const rBits = BigInt(limbBits * Math.ceil((bits + 2) / limbBits)); // R = 2^rBits, the kernel's choice
      const rInv = back(big(1n << rBits).modInverse(big(n))); // reference: jsbn
      const xs = [n - 1n, n - 0x7f4a7c159e3779b9n, n - 4097n, n - (1n << 200n) + 12345n].map((m) => (m * rInv) % n);
      const pairs = xs.flatMap((a) => xs.map((b) => [a, b] as [bigint, bigint]));
      const got = products(createMontgomeryKernel(module, n), pairs);
      pairs.forEach(([a, b], i) => expect(got[i]).toBe((a * b) % n)); // reference: BigInt
    });

    it('keeps a long chain of products in Montgomery form (400 calls) and matches BigInt at the end', () => {
      const n = (1n << BigInt(bits)) - 159n; // odd, top bit set
      const k = createMontgomeryKernel(module, n);
      const factors = [n - 1n, n - 2n, (n * 2n) / 3n, 3n, n >> 1n, 123456789n << 1000n];
      k.ensureSlots(2 + factors.length);
      factors.forEach((f, i) => k.set(2 + i, f));
      k.setOne(0);
      let expected = 1n;
      let from = 0;
      for (let step = 0; step < 400; step++) {
        const f = step % factors.length;
        const to = 1 - from;
        k.multiplyMany(Uint32Array.of(to), Uint32Array.of(from), Uint32Array.of(2 + f), 1);
        expected = (expected * factors[f]!) % n; // reference: BigInt
        from = to;
      }
      expect(k.get(from)).toBe(expected);
      expect(k.get(from)).toBe(back(factors.reduce((acc, f, i) => acc.multiply(big(f).modPow(big(BigInt(Math.floor(400 / factors.length) + (i < 400 % factors.length ? 1 : 0))), big(n))).mod(big(n)), big(1n)))); // reference: jsbn
    });

    it('squares in a batch (left = right), chains four lanes independently, and handles counts above one index chunk', () => {
      const n = ((1n << BigInt(bits)) - 1n) ^ (1n << 1000n);
      const k = createMontgomeryKernel(module, n);
      const count = 1030; // more than the 1024 products the kernel takes per call, not a multiple of 4
      k.ensureSlots(2 * count);
      const xs = Array.from({ length: count }, (_, i) => (n - 1n - BigInt(i) * 0x9e3779b97f4a7c15n) % n);
      xs.forEach((x, i) => k.set(i, x));
      const ins = Uint32Array.from({ length: count }, (_, i) => i);
      const outs = Uint32Array.from({ length: count }, (_, i) => count + i);
      k.multiplyMany(outs, ins, ins, count);
      k.multiplyMany(ins, outs, outs, count);
      xs.forEach((x, i) => expect(k.get(i)).toBe((((x * x) % n) ** 2n) % n)); // reference: BigInt
    });

    it('set/get round-trips, setOne, copy, and count 0 changes nothing', () => {
      const n = (1n << BigInt(bits)) - 1n - (1n << 77n);
      const k = createMontgomeryKernel(module, n);
      k.ensureSlots(4);
      for (const x of [0n, 1n, n - 1n, n >> 3n]) {
        k.set(3, x);
        expect(k.get(3)).toBe(x);
      }
      k.setOne(1);
      expect(k.get(1)).toBe(1n);
      k.copy(0, 3);
      expect(k.get(0)).toBe(n >> 3n);
      k.multiplyMany(Uint32Array.of(0), Uint32Array.of(1), Uint32Array.of(1), 0);
      expect(k.get(0)).toBe(n >> 3n);
    });
  });
}

describe('Montgomery kernel: products in place', () => {
  it('out[i] = left[i] updates in place, as the answer loop uses it (checked against BigInt)', () => {
    fc.assert(
      fc.property(oddModulus(2048), fc.integer({ min: 1, max: 11 }), fc.nat(), (n, count, seed) => {
        const k = createMontgomeryKernel(module, n);
        k.ensureSlots(2 * count);
        const xs: bigint[] = [];
        const ys: bigint[] = [];
        for (let i = 0; i < count; i++) {
          xs.push(((n * BigInt(seed + i + 1)) / 13n) % n);
          ys.push((n * BigInt(seed + 2 * i + 3)) / 17n % n);
          k.set(i, xs[i]!);
          k.set(count + i, ys[i]!);
        }
        const acc = Uint32Array.from({ length: count }, (_, i) => i);
        const other = Uint32Array.from({ length: count }, (_, i) => count + i);
        for (let round = 0; round < 3; round++) k.multiplyMany(acc, acc, other, count);
        for (let i = 0; i < count; i++) expect(k.get(i)).toBe((xs[i]! * ys[i]! ** 3n) % n);
      }),
      { numRuns: 20, seed: 20261203 },
    );
  });
});

describe('Montgomery kernel: random residues and batch reads', () => {
  it('getMany reads what get reads (BigInt reference), across more than one batch of 1,024', () => {
    fc.assert(
      fc.property(oddModulus(2048), (n) => {
        const k = createMontgomeryKernel(module, n);
        k.ensureSlots(1100);
        const xs = Array.from({ length: 1100 }, (_, i) => (n / 1101n) * BigInt(i) + BigInt(i % 7));
        xs.forEach((x, i) => k.set(i, x));
        expect(k.getMany(0, 1100)).toEqual(xs);
        expect(k.getMany(37, 3)).toEqual([k.get(37), k.get(38), k.get(39)]);
      }),
      { numRuns: 3, seed: 20261203 },
    );
  });

  it('setRandomNonZero gives residues in [1, n) that multiply like any other value', () => {
    const n = (1n << 2047n) + 12345n * 2n + 1n;
    const k = createMontgomeryKernel(module, n);
    k.ensureSlots(300);
    for (let i = 0; i < 100; i++) k.setRandomNonZero(i);
    const drawn = k.getMany(0, 100);
    expect(drawn.every((x) => x >= 1n && x < n)).toBe(true);
    expect(new Set(drawn).size).toBe(100);
    // Uniform on [1, n): about half the draws fall below n / 2 (a loose check, 100 draws).
    const low = drawn.filter((x) => x < n / 2n).length;
    expect(low).toBeGreaterThan(25);
    expect(low).toBeLessThan(75);
    const idx = (b: number) => Uint32Array.from({ length: 100 }, (_, i) => b + i);
    k.multiplyMany(idx(100), idx(0), idx(0), 100);
    expect(k.getMany(100, 100)).toEqual(drawn.map((x) => (x * x) % n));
  });
});

describe('Montgomery kernel: sizes, growth and argument errors', () => {
  const n = (1n << 2048n) - 1n;

  it('kernelBitsFor picks the size by bit length', () => {
    expect(kernelBitsFor(3n)).toBe(2048);
    expect(kernelBitsFor((1n << 2048n) - 1n)).toBe(2048);
    expect(kernelBitsFor((1n << 2048n) + 1n)).toBe(3072);
    expect(kernelBitsFor((1n << 3072n) - 1n)).toBe(3072);
    expect(() => kernelBitsFor((1n << 3072n) + 1n)).toThrow(/kernelBitsFor: expected a modulus of at most 3072 bits, got 3073 bits/);
    expect(() => kernelBitsFor(10n)).toThrow(RangeError);
    expect(() => kernelBitsFor(1n)).toThrow(RangeError);
    expect(() => kernelBitsFor(7 as unknown as bigint)).toThrow(TypeError);
  });

  it('serves small odd moduli too (BigInt reference)', () => {
    for (const m of [3n, 5n, (1n << 64n) + 13n, (1n << 1024n) - 105n]) {
      const got = products(createMontgomeryKernel(module, m), [[m - 1n, m - 1n], [m - 1n, 2n % m], [1n, m - 1n]]);
      expect(got).toEqual([1n, (2n * (m - 1n)) % m, m - 1n]); // reference: BigInt
    }
  });

  it('keeps values across memory growth', () => {
    const k = createMontgomeryKernel(module, n);
    const before = k.slots;
    k.ensureSlots(1);
    k.set(0, 12345n);
    k.ensureSlots(before + 500);
    expect(k.slots).toBeGreaterThanOrEqual(before + 500);
    expect(k.get(0)).toBe(12345n);
    k.set(before + 499, n - 5n);
    expect(k.get(before + 499)).toBe(n - 5n);
  });

  it('rejects bad modules and moduli', () => {
    expect(() => createMontgomeryKernel({} as WebAssembly.Module, n)).toThrow(TypeError);
    const empty = new WebAssembly.Module(Uint8Array.of(0, 0x61, 0x73, 0x6d, 1, 0, 0, 0));
    expect(() => createMontgomeryKernel(empty, n)).toThrow(/createMontgomeryKernel: expected the Montgomery kernel module/);
    expect(() => createMontgomeryKernel(module, n + 1n)).toThrow(RangeError);
    expect(() => createMontgomeryKernel(module, 1n << 3100n)).toThrow(RangeError);
    expect(() => createMontgomeryKernel(module, 5 as unknown as bigint)).toThrow(TypeError);
  });

  it('checks slots, values and arrays', () => {
    const k = createMontgomeryKernel(module, n);
    k.ensureSlots(8);
    const s = k.slots;
    expect(() => k.set(s, 1n)).toThrow(new RegExp(`set: expected slot index in \\[0, ${s}\\), got ${s}`));
    expect(() => k.set(-1, 1n)).toThrow(RangeError);
    expect(() => k.set(1.5, 1n)).toThrow(RangeError);
    expect(() => k.set(0, n)).toThrow(/set: expected value in \[0, n\), got a value >= n/);
    expect(() => k.set(0, -1n)).toThrow(RangeError);
    expect(() => k.set(0, 1 as unknown as bigint)).toThrow(/set: expected bigint value, got number/);
    expect(() => k.get(s)).toThrow(RangeError);
    expect(() => k.setOne(s)).toThrow(RangeError);
    expect(() => k.copy(0, s)).toThrow(RangeError);
    expect(() => k.ensureSlots(-1)).toThrow(/ensureSlots: expected integer count >= 0, got -1/);
    const one = Uint32Array.of(0);
    expect(() => k.multiplyMany([0] as unknown as Uint32Array, one, one, 1)).toThrow(/multiplyMany: expected Uint32Array out, got object/);
    expect(() => k.multiplyMany(Uint32Array.of(1), one, one, 2)).toThrow(/multiplyMany: expected integer count in \[0, 1\], got 2/);
    expect(() => k.multiplyMany(Uint32Array.of(s), one, one, 1)).toThrow(RangeError);
    expect(() => k.multiplyMany(Uint32Array.of(2, 3), Uint32Array.of(1, 2), Uint32Array.of(1, 1), 2)).toThrow(
      /multiplyMany: expected no product to read another's out slot, got slot 2 read at 1 and written at 0/,
    );
    expect(() => k.multiplyMany(Uint32Array.of(2, 3), Uint32Array.of(1, 1), Uint32Array.of(1, 2), 2)).toThrow(
      /multiplyMany: expected no product to read another's out slot, got slot 2 read at 1 and written at 0/,
    );
    expect(() => k.multiplyMany(Uint32Array.of(1, 2), Uint32Array.of(3, 4), Uint32Array.of(5, 1), 2)).toThrow(
      /multiplyMany: expected no product to read another's out slot, got slot 1 read at 1 and written at 0/,
    );
    expect(() => k.multiplyMany(Uint32Array.of(4, 4), Uint32Array.of(1, 2), Uint32Array.of(1, 1), 2)).toThrow(
      /multiplyMany: expected distinct out slots, got slot 4 twice \(again at 1\)/,
    );
  });
});
