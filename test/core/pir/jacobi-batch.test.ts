import { beforeAll, describe, expect, it } from 'vitest';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { valuesHaveJacobiOne } from '../../../core/pir/jacobi-batch.ts';
import { generateKeyPair, type PirKeyPair } from '../../../core/pir/keys.ts';
import { createBigIntEngine } from '../../../core/pir/product-engine.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';
import { seededRandom } from '../../../scripts/demo/seeded-random.ts';
import { eulerSymbol, seededBytes } from './residuosity-reference.ts';

// Which values are bad comes from Euler's criterion in jsbn (residuosity-reference.ts), and the
// random subsets from a seeded source.
const euler = eulerSymbol;

let module: WebAssembly.Module;
let key: PirKeyPair;
let bad: bigint; // Jacobi symbol -1 modulo n
beforeAll(async () => {
  module = await loadKernelModuleNode(2048);
  key = await generateKeyPair({ modulusBits: 2048 });
  const next = seededRandom(5);
  for (let x = 2n + BigInt(Math.floor(next() * 1e9)); ; x++) {
    if (euler(x, key.p) * euler(x, key.q) === -1) {
      bad = x;
      break;
    }
  }
});

const engines = () => [createMontgomeryKernel(module, key.n), createBigIntEngine(key.n)];

describe('the batch check of the values\' Jacobi symbols', () => {
  it('passes every honest query, on the kernel and on the BigInt engine', () => {
    for (const columns of [1, 5, 37, 200]) {
      const query = makeQuery(key, columns, columns - 1);
      for (const engine of engines()) expect(valuesHaveJacobiOne(query, engine, 0, seededBytes(columns))).toBe(true);
    }
  });

  it('refuses one bad value at any position, over many seeded subset draws (Euler in jsbn says which are bad)', () => {
    const columns = 37;
    const honest = makeQuery(key, columns, 3);
    for (let j = 0; j < columns; j++) {
      const values = honest.map((y, i) => (i === j ? (bad * y) % key.n : y));
      expect(euler(values[j]!, key.p) * euler(values[j]!, key.q)).toBe(-1);
      for (let seed = 0; seed < 3; seed++) expect(valuesHaveJacobiOne(values, createMontgomeryKernel(module, key.n), 0, seededBytes(1000 * j + seed)), `position ${j}, seed ${seed}`).toBe(false);
    }
  });

  it('refuses a value sharing a factor with n (Jacobi symbol 0)', () => {
    const values = makeQuery(key, 12, 0);
    values[7] = key.p * 5n;
    expect(valuesHaveJacobiOne(values, createMontgomeryKernel(module, key.n), 0, seededBytes(7))).toBe(false);
  });

  it('can fail: with one trial, a query with one bad value passes about half the time, as the argument says', () => {
    const values = makeQuery(key, 20, 0);
    values[11] = (bad * values[11]!) % key.n;
    let passed = 0;
    for (let seed = 0; seed < 200; seed++) if (valuesHaveJacobiOne(values, createBigIntEngine(key.n), 0, seededBytes(seed), 1)) passed++;
    expect(passed).toBeGreaterThan(60);
    expect(passed).toBeLessThan(140);
  });

  it('gives the same verdicts on the kernel (wire bytes in) as on the BigInt engine', async () => {
    const { encodeQuery, decodeQueryWire } = await import('../../../core/pir/wire.ts');
    const honest = makeQuery(key, 50, 9);
    for (const values of [honest, honest.map((y, i) => (i === 30 ? (bad * y) % key.n : y))]) {
      const wire = decodeQueryWire(encodeQuery(key.n, values)).values;
      const onKernel = valuesHaveJacobiOne(wire, createMontgomeryKernel(module, key.n), 0, seededBytes(3));
      expect(onKernel).toBe(valuesHaveJacobiOne(values, createBigIntEngine(key.n), 0, seededBytes(3)));
    }
  });
});
