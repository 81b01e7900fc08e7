import { describe, expect, it } from 'vitest';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { answerMemory, answerSlots, kernelSlotBytes } from '../../../core/pir/answer-memory.ts';
import { type AnswerPlan } from '../../../core/pir/answer-plan.ts';
import { mineMatrix } from '../../../core/pir/mined-plan.ts';
import { answerWithPlan } from '../../../core/pir/planned-answer.ts';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { randomMatrix } from './random-matrix.ts';

const SEED = 20261204;

/** A seeded integer of at most `bits` bits, 32 bits per draw of the seeded generator. */
const seededBits = (random: () => number, bits: number) => {
  let x = 0n;
  for (let i = 0; i < bits; i += 32) x = (x << 32n) | BigInt(Math.floor(random() * 2 ** 32));
  return x & ((1n << BigInt(bits)) - 1n);
};
/** An odd modulus of exactly `bits` bits (the kernel needs no primes to multiply). */
const oddModulus = (random: () => number, bits: number) => (1n << BigInt(bits - 1)) | seededBits(random, bits - 2) | 1n;
const PAGE = 65536; // WebAssembly memory grows in 64 KiB pages (WebAssembly core specification)

describe('answer memory model', () => {
  it.each([2048, 3072] as const)('slot bytes at %i bits match the stride of the kernel memory', async (bits) => {
    const kernel = createMontgomeryKernel(await loadKernelModuleNode(bits), oddModulus(seededRandom(SEED), bits));
    kernel.ensureSlots(1000);
    const small = kernel.memoryBytes;
    kernel.ensureSlots(1000 + 1600);
    // 1,600 more slots of kernelSlotBytes each, rounded to whole pages.
    const grown = kernel.memoryBytes - small;
    expect(Math.abs(grown - 1600 * kernelSlotBytes(bits)), `seed ${SEED}`).toBeLessThanOrEqual(PAGE);
  });

  it('bounds the kernel memory an answer really takes, for every plan', async () => {
    const m = randomMatrix(150, 300, 0.3, 7);
    const plans: AnswerPlan[] = [{ kind: 'plain' }, { kind: 'blocked', blockColumns: 6 }, { kind: 'mined', mined: mineMatrix(m) }];
    // Modulus and values from a seeded generator (seed SEED, named in each failure message).
    const random = seededRandom(SEED);
    for (const plan of plans) {
      const n = oddModulus(random, 2048);
      const kernel = createMontgomeryKernel(await loadKernelModuleNode(2048), n);
      // Values in [1, n): 2047 bits are below n, which has exactly 2048.
      const values = Array.from({ length: m.columns }, () => 1n + seededBits(random, 2047));
      answerWithPlan(m, values, plan, kernel);
      const shape = plan.kind === 'mined' ? { kind: 'mined' as const, rules: plan.mined.rules.length } : plan;
      const model = answerMemory(m.rows, m.columns, shape, 2048);
      // The model counts the slots the answer asks for plus the read-out: within one page of the real memory.
      expect(kernel.slots, `${plan.kind} plan, seed ${SEED}`).toBeGreaterThanOrEqual(answerSlots(m.rows, m.columns, shape));
      expect(Math.abs(kernel.memoryBytes - model.kernelBytes), `${plan.kind} plan, seed ${SEED}`).toBeLessThanOrEqual(PAGE);
    }
  });

  it('counts the matrix twice while a stored blob is decoded', () => {
    const m = answerMemory(50_000, 32 * 4000, { kind: 'blocked', blockColumns: 2 }, 2048);
    expect(m.matrixBytes).toBe(50_000 * 4000 * 4);
    expect(m.peakBytes).toBe(Math.max(2 * m.matrixBytes, m.matrixBytes + m.kernelBytes + m.valueBytes));
  });
});
