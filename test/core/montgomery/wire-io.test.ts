import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import { bigintToBytes, bytesToBigint } from '../../../core/bigint/bytes.ts';
import { createMontgomeryKernel, instantiateKernel } from '../../../core/montgomery/kernel.ts';
import { lowOnesBits } from '../../../core/pir/low-ones-modulus.ts';
import type { WireNumbers } from '../../../core/pir/wire.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { jsbnProduct, operand } from './kernel-products.ts';

// setManyWire and getManyWire move numbers between wire bytes and the kernel's Montgomery slots
// with no BigInt; the references are the BigInt set/get, bigintToBytes/bytesToBigint and jsbn.

let module: WebAssembly.Module;
beforeAll(async () => {
  module = await loadKernelModuleNode(2048);
});

/** Numbers as a wire body would hold them, `width` bytes each, after a 7-byte prefix. */
function wire(values: readonly bigint[], width: number): WireNumbers {
  const bytes = new Uint8Array(7 + width * values.length).fill(0xee, 0, 7);
  values.forEach((v, i) => bytes.set(bigintToBytes(v, width), 7 + i * width));
  return { bytes, offset: 7, width, count: values.length };
}

const oddModulus = (bits: number) => fc.bigInt({ min: 1n << BigInt(bits - 1), max: (1n << BigInt(bits)) - 1n }).map((n) => n | 1n);
/** Moduli whose low half is all ones, as the SDK's keys (the kernel's other multiply path). */
const lowOnesModulus = (bits: number) => oddModulus(bits).map((n) => n | ((1n << BigInt(lowOnesBits(bits))) - 1n));

for (const bits of [2048, 3072] as const) {
  describe(`wire bytes in and out of the kernel, ${bits}-bit moduli`, () => {
    it.each([
      ['random moduli', oddModulus(bits)],
      ['moduli with the low half all ones', lowOnesModulus(bits)],
    ])('%s: bytes in, products, bytes out equal BigInt and jsbn; widths with leading zeros too (fast-check)', (_label, moduli) => {
      fc.assert(
        fc.property(
          moduli.chain((n) => fc.tuple(fc.constant(n), fc.array(fc.tuple(operand(n), operand(n)), { minLength: 1, maxLength: 9 }), fc.integer({ min: 0, max: 2 }))),
          ([n, pairs, extra]) => {
            const width = bits / 8 + extra;
            const k = createMontgomeryKernel(module, n);
            const c = pairs.length;
            k.ensureSlots(3 * c);
            const slots = (base: number) => Uint32Array.from({ length: c }, (_, i) => base + i);
            const left = wire(pairs.map(([a]) => a), width);
            k.setManyWire(slots(0), left, 0);
            pairs.forEach(([, b], i) => k.set(c + i, b));
            // Bytes in, BigInt out: what went in comes out.
            expect(k.getMany(0, c)).toEqual(pairs.map(([a]) => a));
            k.multiplyMany(slots(2 * c), slots(0), slots(c), c);
            const out = wire(new Array<bigint>(c + 1).fill(0n), width);
            k.getManyWire(2 * c, c, out, 1);
            pairs.forEach(([a, b], i) => {
              const got = bytesToBigint(out.bytes.subarray(out.offset + (i + 1) * width, out.offset + (i + 2) * width));
              expect(got).toBe((a * b) % n);
              expect(got).toBe(jsbnProduct(a, b, n));
            });
            expect(Array.from(out.bytes.subarray(0, 7))).toEqual(new Array(7).fill(0xee));
            expect(Array.from(out.bytes.subarray(7, 7 + width))).toEqual(new Array(width).fill(0));
            // Bytes in and straight out again: the same bytes.
            const back = wire(new Array<bigint>(c).fill(0n), width);
            k.getManyWire(0, c, back, 0);
            expect(back.bytes.subarray(7)).toEqual(left.bytes.subarray(7));
          },
        ),
        { numRuns: bits === 2048 ? 20 : 12, seed: 20261203 },
      );
    });

    it('writes a product that is 0 modulo n as zero bytes, though the kernel may hold it as n', () => {
      // n = 3 m: m * 3 = n, and many products of multiples of m land on 0 modulo n.
      const m = (1n << BigInt(bits - 2)) + 12345n * 2n + 1n;
      const n = 3n * m;
      const k = createMontgomeryKernel(module, n);
      const cases = [[m, 3n], [2n * m, 3n], [m, 6n], [n - m, 3n], [3n, 2n * m]] as const;
      k.ensureSlots(3 * cases.length);
      cases.forEach(([a, b], i) => {
        k.set(i, a);
        k.set(cases.length + i, b);
      });
      const slots = (base: number) => Uint32Array.from({ length: cases.length }, (_, i) => base + i);
      k.multiplyMany(slots(2 * cases.length), slots(0), slots(cases.length), cases.length);
      const out = wire(new Array<bigint>(cases.length).fill(1n), bits / 8);
      k.getManyWire(2 * cases.length, cases.length, out, 0);
      expect(out.bytes.subarray(7).every((b) => b === 0)).toBe(true);
    });

    it('reads from an offset into the numbers, and refuses values at or above n', () => {
      const n = (1n << BigInt(bits)) - 159n;
      const k = createMontgomeryKernel(module, n);
      k.ensureSlots(4);
      const numbers = wire([5n, n - 1n, 0n, n, n + 1n], bits / 8);
      k.setManyWire(Uint32Array.of(0, 1, 2), numbers, 0);
      expect(k.getMany(0, 3)).toEqual([5n, n - 1n, 0n]);
      expect(() => k.setManyWire(Uint32Array.of(3), numbers, 3)).toThrow(/expected number 3 in \[0, n\)/);
      expect(() => k.setManyWire(Uint32Array.of(3), numbers, 4)).toThrow(RangeError);
      expect(() => k.setManyWire(Uint32Array.of(0, 1), numbers, 4)).toThrow(/expected 2 numbers from 4/);
      expect(() => k.getManyWire(0, 2, wire([0n, 0n], bits / 8 - 1), 0)).toThrow(/at least/);
    });
  });
}

describe('one kernel instance serving modulus after modulus (as the Worker keeps one warm)', () => {
  it('gives BigInt and jsbn products for moduli of both sizes and both forms in turn, whatever the last one left in memory (fast-check)', () => {
    const instance = instantiateKernel(module);
    const moduli = fc.oneof(oddModulus(2048), oddModulus(3072), lowOnesModulus(2048), lowOnesModulus(3072));
    fc.assert(
      fc.property(fc.array(moduli.chain((n) => fc.tuple(fc.constant(n), fc.array(fc.tuple(operand(n), operand(n)), { minLength: 1, maxLength: 6 }))), { minLength: 2, maxLength: 5 }), (turns) => {
        for (const [n, pairs] of turns) {
          const k = createMontgomeryKernel(instance, n);
          const c = pairs.length;
          k.ensureSlots(3 * c);
          pairs.forEach(([a, b], i) => {
            k.set(i, a);
            k.set(c + i, b);
          });
          const slots = (base: number) => Uint32Array.from({ length: c }, (_, i) => base + i);
          k.multiplyMany(slots(2 * c), slots(0), slots(c), c);
          pairs.forEach(([a, b], i) => {
            expect(k.get(2 * c + i)).toBe((a * b) % n);
            expect(k.get(2 * c + i)).toBe(jsbnProduct(a, b, n));
          });
        }
      }),
      { numRuns: 15, seed: 20261203 },
    );
  });
});
