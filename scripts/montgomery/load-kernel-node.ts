import { readFile } from 'node:fs/promises';

/**
 * Compiles the committed kernel for Node (tests, bench, the Node SDK). One module serves both
 * sizes, so `bits` only checks the request; a Worker imports core/montgomery/kernel.wasm instead.
 */
export async function loadKernelModuleNode(bits: 2048 | 3072): Promise<WebAssembly.Module> {
  if (bits !== 2048 && bits !== 3072) throw new RangeError(`loadKernelModuleNode: expected 2048 or 3072, got ${bits}`);
  const bytes = await readFile(new URL('../../core/montgomery/kernel.wasm', import.meta.url));
  return WebAssembly.compile(bytes);
}
