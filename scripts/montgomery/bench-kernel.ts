/**
 * Side-by-side cost of one modular product at 2048 and 3072 bits, same process, median of 5:
 * BigInt `(a * b) % n`, jsbn multiply + mod, the BigInt Montgomery reference and the SIMD kernel
 * on a random modulus and on one whose low half is all ones as generated keys have (1,024
 * independent products, four per kernel pass; rounds of the five methods interleaved). `npx tsx scripts/montgomery/bench-kernel.ts`
 * prints a table; `benchKernel()` returns the same figures for `npm run bench`.
 */
import { fileURLToPath } from 'node:url';
import { BigInteger } from 'jsbn';
import { randomBelow, randomBits } from '../../core/bigint/random.ts';
import { createMontgomeryKernel } from '../../core/montgomery/kernel.ts';
import { bigintMontgomery } from '../../core/montgomery/montgomery-bigint.ts';
import { lowOnesBits } from '../../core/pir/low-ones-modulus.ts';
import { loadKernelModuleNode } from './load-kernel-node.ts';

export interface KernelBenchRow {
  bits: 2048 | 3072;
  /** ns per product for each method */
  bigintNs: number;
  jsbnNs: number;
  bigintMontgomeryNs: number;
  kernelNs: number;
  /** the kernel on a modulus of the same size whose low half is all ones, as keys have (multiplyOnes) */
  kernelLowOnesNs: number;
  /** bigintNs / kernelNs: how many times faster the kernel is than BigInt `(a * b) % n` */
  kernelVsBigint: number;
  /** bigintNs / kernelLowOnesNs */
  kernelLowOnesVsBigint: number;
}

const REPEATS = 5;

/**
 * Times each method once per round, rounds interleaved, and returns each method's median ns per
 * item: on a shared, noisy machine every method then sees the same background load.
 */
function interleavedMedians(methods: { items: number; run: () => void }[]): number[] {
  const times = methods.map(() => [] as number[]);
  for (let round = 0; round < REPEATS; round++) {
    methods.forEach((m, i) => {
      const t = performance.now();
      m.run();
      times[i]!.push(((performance.now() - t) * 1e6) / m.items);
    });
  }
  return times.map((ts) => ts.sort((a, b) => a - b)[Math.floor(REPEATS / 2)]!);
}

async function benchSize(bits: 2048 | 3072): Promise<KernelBenchRow> {
  const n = randomBits(bits) | (1n << BigInt(bits - 1)) | 1n;
  const count = 1024;
  const xs = Array.from({ length: count }, () => randomBelow(n));
  const ys = Array.from({ length: count }, () => randomBelow(n));
  let sink = 0n;

  const jsbnCount = 128;
  const jn = new BigInteger(n.toString(16), 16);
  const jx = xs.slice(0, jsbnCount).map((x) => new BigInteger(x.toString(16), 16));
  const jy = ys.slice(0, jsbnCount).map((y) => new BigInteger(y.toString(16), 16));

  const ref = bigintMontgomery(n, bits === 2048 ? 2052 : 3084);
  const mx = xs.map(ref.toMontgomery);
  const my = ys.map(ref.toMontgomery);

  const module = await loadKernelModuleNode(bits);
  const left = Uint32Array.from({ length: count }, (_, i) => i);
  const right = Uint32Array.from({ length: count }, (_, i) => count + i);
  const out = Uint32Array.from({ length: count }, (_, i) => 2 * count + i);
  /** A kernel for modulus m holding xs and ys reduced mod m, warmed up, and a check of one product. */
  const kernelFor = (m: bigint) => {
    const kernel = createMontgomeryKernel(module, m);
    kernel.ensureSlots(3 * count);
    xs.forEach((x, i) => kernel.set(i, x % m));
    ys.forEach((y, i) => kernel.set(count + i, y % m));
    // Warm up so the engine's optimising tier has replaced its baseline code. It compiles on a
    // background thread, so give it time as well as calls: once, after 30 calls alone, the general
    // multiply measured 3,015 ns for a whole run against 1,750-1,850 in others, as if not yet tiered up.
    const warmUntil = performance.now() + 500;
    for (let i = 0; i < 30 || performance.now() < warmUntil; i++) kernel.multiplyMany(out, left, right, count);
    const check = () => {
      if (kernel.get(2 * count + 7) !== ((xs[7]! % m) * (ys[7]! % m)) % m) throw new Error('benchKernel: kernel product disagrees with BigInt');
    };
    return { run: () => kernel.multiplyMany(out, left, right, count), check, onesLimbs: kernel.onesLimbs };
  };
  const general = kernelFor(n);
  const lowOnes = lowOnesBits(bits);
  const onesModulus = kernelFor(n | ((1n << BigInt(lowOnes)) - 1n));
  if (general.onesLimbs !== 0 || onesModulus.onesLimbs === 0) throw new Error('benchKernel: expected the general and the ones path');

  const [bigintNs, jsbnNs, bigintMontgomeryNs, kernelNs, kernelLowOnesNs] = interleavedMedians([
    { items: count, run: () => { for (let i = 0; i < count; i++) sink ^= (xs[i]! * ys[i]!) % n; } },
    { items: jsbnCount, run: () => { for (let i = 0; i < jsbnCount; i++) jx[i]!.multiply(jy[i]!).mod(jn); } },
    { items: count, run: () => { for (let i = 0; i < count; i++) sink ^= ref.multiply(mx[i]!, my[i]!); } },
    { items: count, run: general.run },
    { items: count, run: onesModulus.run },
  ]) as [number, number, number, number, number];
  general.check();
  onesModulus.check();
  if (sink === -1n) console.log(sink);

  return {
    bits, bigintNs, jsbnNs, bigintMontgomeryNs, kernelNs, kernelLowOnesNs,
    kernelVsBigint: bigintNs / kernelNs, kernelLowOnesVsBigint: bigintNs / kernelLowOnesNs,
  };
}

/** ns per product at 2048 and 3072 bits for each method, and the kernel's speed-up over BigInt. */
export async function benchKernel(): Promise<{ rows: KernelBenchRow[] }> {
  return { rows: [await benchSize(2048), await benchSize(3072)] };
}

/** The figures as a Markdown table. */
export function formatKernelBench(rows: KernelBenchRow[]): string {
  const f = (x: number) => Math.round(x).toLocaleString('en-US');
  const lines = [
    '| bits | BigInt (a*b)%n | jsbn multiply+mod | BigInt Montgomery | SIMD kernel | kernel vs BigInt | kernel, low half of n ones | vs BigInt |',
    '|---|---|---|---|---|---|---|---|',
  ];
  for (const r of rows) {
    lines.push(
      `| ${r.bits} | ${f(r.bigintNs)} ns | ${f(r.jsbnNs)} ns | ${f(r.bigintMontgomeryNs)} ns | ${f(r.kernelNs)} ns | ${r.kernelVsBigint.toFixed(2)}x | ` +
        `${f(r.kernelLowOnesNs)} ns | ${r.kernelLowOnesVsBigint.toFixed(2)}x |`,
    );
  }
  return lines.join('\n');
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const { rows } = await benchKernel();
  console.log('ns per modular product, same process, median of 5');
  console.log(formatKernelBench(rows));
}
