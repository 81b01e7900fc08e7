import type { PlanRecord } from '../geo/manifest.ts';
import { blindingSlots, TABLES_AT_ONCE } from './planned-answer.ts';

/**
 * Working memory of one answer, so a build can refuse a matrix a Worker could not answer from
 * (Cloudflare Workers give an isolate 128 MB: developers.cloudflare.com/workers/platform/limits).
 * The budget leaves half of that to the runtime, the code and the other cached versions.
 */
export const ANSWER_MEMORY_BUDGET_BYTES = 64 * 2 ** 20;

/** Limb size of the committed Montgomery kernel (scripts/montgomery/generate-kernel.ts). */
const KERNEL_LIMB_BITS = 13;
/** The kernel's fixed areas below its slots (modulus, vectors, index arrays, pair arrays): 64 KiB. */
const KERNEL_FIXED_BYTES = 65536;
/** getMany's working slots: one for the plain 1 and a chunk of 1,024 outputs. */
const READOUT_SLOTS = 1 + 1024;
/** A V8 BigInt: its digits plus a 16-byte header (an estimate, common practice for V8 objects). */
const bigintBytes = (bits: number) => 16 + Math.ceil(bits / 64) * 8;

export type PlanShape = { kind: 'plain' } | { kind: 'blocked'; blockColumns: number } | { kind: 'mined'; rules: number };

export interface AnswerMemory {
  /** The matrix words held while answering. */
  matrixBytes: number;
  /** Kernel memory: row accumulators, the plan's working slots, blinding, read-out, fixed areas. */
  kernelBytes: number;
  /** Query values and answer rows, as BigInts and in their wire form. */
  valueBytes: number;
  /** The largest of: loading (stored blob and decoded words at once) and answering. */
  peakBytes: number;
}

/** Slot bytes of the kernel at `modulusBits`: limbs rounded up to a multiple of four, four bytes each. */
export function kernelSlotBytes(modulusBits: number): number {
  return Math.ceil(Math.ceil((modulusBits + 2) / KERNEL_LIMB_BITS) / 4) * 16;
}

/** The slots planned-answer.ts asks of the engine for this plan: R accumulators, the plan's working slots, the blinding's. */
export function answerSlots(rows: number, columns: number, plan: PlanShape): number {
  const working = plan.kind === 'plain' ? columns : plan.kind === 'blocked' ? TABLES_AT_ONCE * 2 ** plan.blockColumns : columns + plan.rules;
  return rows + working + blindingSlots(rows);
}

/** The working memory of one answer on a rows x columns matrix with `plan`, at `modulusBits`. */
export function answerMemory(rows: number, columns: number, plan: PlanShape, modulusBits: number): AnswerMemory {
  const matrixBytes = rows * Math.ceil(columns / 32) * 4;
  const kernelBytes = KERNEL_FIXED_BYTES + (answerSlots(rows, columns, plan) + READOUT_SLOTS) * kernelSlotBytes(modulusBits);
  const wire = Math.ceil(modulusBits / 8);
  const valueBytes = (columns + rows) * (bigintBytes(modulusBits) + wire);
  return { matrixBytes, kernelBytes, valueBytes, peakBytes: Math.max(2 * matrixBytes, matrixBytes + kernelBytes + valueBytes) };
}

/** The plan shape of a manifest's plan record. */
export function planShapeOf(record: PlanRecord): PlanShape {
  if (record.kind === 'blocked') return { kind: 'blocked', blockColumns: record.blockColumns };
  if (record.kind === 'mined') return { kind: 'mined', rules: record.rules };
  return { kind: 'plain' };
}
