import kernelModule from '../../core/montgomery/kernel.wasm';
import { createMontgomeryKernel } from '../../core/montgomery/kernel.ts';
import type { ProductEngine } from '../../core/pir/product-engine.ts';

/**
 * The engine answers run on: the WebAssembly SIMD Montgomery kernel. Workers refuse modules
 * compiled from bytes at run time, so the .wasm is imported and bundled by wrangler; each query
 * gets its own instance (its own memory, freed with it) for its own modulus.
 */
export function productEngine(n: bigint): ProductEngine {
  return createMontgomeryKernel(kernelModule, n);
}
