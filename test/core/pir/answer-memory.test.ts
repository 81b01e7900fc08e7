import { describe, expect, it } from 'vitest';
import { randomBelow } from '../../../core/bigint/random.ts';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { answerMemory, answerSlots, kernelSlotBytes } from '../../../core/pir/answer-memory.ts';
import { type AnswerPlan } from '../../../core/pir/answer-plan.ts';
import { mineMatrix } from '../../../core/pir/mined-plan.ts';
import { answerWithPlan } from '../../../core/pir/planned-answer.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { randomMatrix } from './random-matrix.ts';

/** An odd modulus of exactly `bits` bits (the kernel needs no primes to multiply). */
const oddModulus = (bits: number) => (1n << BigInt(bits - 1)) | randomBelow(1n << BigInt(bits - 2)) | 1n;
const PAGE = 65536; // WebAssembly memory grows in 64 KiB pages (WebAssembly core specification)

describe('answer memory model', () => {
  it.each([2048, 3072] as const)('slot bytes at %i bits match the stride of the kernel memory', async (bits) => {
    const kernel = createMontgomeryKernel(await loadKernelModuleNode(bits), oddModulus(bits));
    kernel.ensureSlots(1000);
    const small = kernel.memoryBytes;
    kernel.ensureSlots(1000 + 1600);
    // 1,600 more slots of kernelSlotBytes each, rounded to whole pages.
    const grown = kernel.memoryBytes - small;
    expect(Math.abs(grown - 1600 * kernelSlotBytes(bits))).toBeLessThanOrEqual(PAGE);
  });

  it('bounds the kernel memory an answer really takes, for every plan', async () => {
    const m = randomMatrix(150, 300, 0.3, 7);
    const plans: AnswerPlan[] = [{ kind: 'plain' }, { kind: 'blocked', blockColumns: 6 }, { kind: 'mined', mined: mineMatrix(m) }];
    for (const plan of plans) {
      const n = oddModulus(2048);
      const kernel = createMontgomeryKernel(await loadKernelModuleNode(2048), n);
      const values = Array.from({ length: m.columns }, () => 1n + randomBelow(n - 1n));
      answerWithPlan(m, values, plan, kernel);
      const shape = plan.kind === 'mined' ? { kind: 'mined' as const, rules: plan.mined.rules.length } : plan;
      const model = answerMemory(m.rows, m.columns, shape, 2048);
      // The model counts the slots the answer asks for plus the read-out: within one page of the real memory.
      expect(kernel.slots).toBeGreaterThanOrEqual(answerSlots(m.rows, m.columns, shape));
      expect(Math.abs(kernel.memoryBytes - model.kernelBytes)).toBeLessThanOrEqual(PAGE);
    }
  });

  it('counts the matrix twice while a stored blob is decoded', () => {
    const m = answerMemory(50_000, 32 * 4000, { kind: 'blocked', blockColumns: 2 }, 2048);
    expect(m.matrixBytes).toBe(50_000 * 4000 * 4);
    expect(m.peakBytes).toBe(Math.max(2 * m.matrixBytes, m.matrixBytes + m.kernelBytes + m.valueBytes));
  });
});
