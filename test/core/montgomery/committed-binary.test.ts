import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { generateKernelWasm, KERNEL_PATH } from '../../../scripts/montgomery/generate-kernel.ts';

describe('core/montgomery/kernel.wasm', () => {
  it('is byte-identical to the module regenerated from scripts/montgomery/generate-kernel.ts', async () => {
    const committed = new Uint8Array(readFileSync(KERNEL_PATH));
    const regenerated = await generateKernelWasm();
    expect(regenerated.length).toBe(committed.length);
    expect(Buffer.from(regenerated).equals(Buffer.from(committed))).toBe(true);
  });

  it('has no imports and exports one memory and the multiply functions', () => {
    const module = new WebAssembly.Module(readFileSync(KERNEL_PATH));
    expect(WebAssembly.Module.imports(module)).toEqual([]);
    const exports = WebAssembly.Module.exports(module);
    expect(exports.filter((e) => e.kind === 'memory').map((e) => e.name)).toEqual(['memory']);
    expect(exports).toContainEqual({ name: 'multiply', kind: 'function' });
    expect(exports).toContainEqual({ name: 'multiplyOnes', kind: 'function' });
  });
});
