import kernelModule from '../../core/montgomery/kernel.wasm';
import { createMontgomeryKernel, instantiateKernel, type KernelInstance, type MontgomeryKernel } from '../../core/montgomery/kernel.ts';

/**
 * Kernel instances no query is using, kept for the next one: a fresh instance must allocate and
 * first touch its memory (tens of MB for a large answer), which measured as a third of a
 * 10,000-site answer in `npm run bench`. At most two are kept, and none whose memory grew above
 * 24 MiB, so idle kernels never crowd the isolate's 128 MB (answer-memory.ts budgets one answer
 * at 64 MiB, version-cache.ts keeps 32 MiB of matrices).
 */
const idle: KernelInstance[] = [];
const MAX_IDLE = 2;
const MAX_IDLE_BYTES = 24 * 2 ** 20;

/**
 * The engine answers run on: the WebAssembly SIMD Montgomery kernel, set up for modulus n over a
 * warm instance when one is free. Workers refuse modules compiled from bytes at run time, so the
 * .wasm is imported and bundled by wrangler. The engine is this query's alone until release();
 * queries that interleave on one isolate each get their own instance.
 */
export function acquireEngine(n: bigint): { engine: MontgomeryKernel; release(): void } {
  const instance = idle.pop() ?? instantiateKernel(kernelModule);
  const engine = createMontgomeryKernel(instance, n);
  let released = false;
  return {
    engine,
    release() {
      if (released) return;
      released = true;
      if (idle.length < MAX_IDLE && engine.memoryBytes <= MAX_IDLE_BYTES) idle.push(instance);
    },
  };
}
