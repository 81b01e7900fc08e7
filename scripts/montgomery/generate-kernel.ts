/**
 * Generates the Montgomery multiplication kernel (WebAssembly text) and assembles it with wabt.
 *
 *   npx tsx scripts/montgomery/generate-kernel.ts      writes core/montgomery/kernel.wasm
 *
 * One module serves both 2048- and 3072-bit moduli: the limb count is an argument of `multiply`
 * and the code loops (8 steps unrolled), so the module stays a few kilobytes. The binary is committed because Workers
 * refuse to compile modules from bytes at run time; test/core/montgomery checks that regenerating
 * gives the committed bytes exactly.
 *
 * Method (product scanning, four independent products in the four i32 lanes of a v128):
 * - numbers are L limbs of 13 bits (158 limbs for 2048-bit moduli, 237 for 3072); with
 *   R = 2^(13L) > 4n, inputs below 2n give outputs below 2n,
 *   so values stay in Montgomery form and no final subtraction is needed;
 * - X[i] holds, per lane, the pair (a_i, q_i) as two i16 and Y[j] the pair (b_j, n_j), so one
 *   i32x4.dot_i16x8_s adds a_i*b_j + q_i*n_j for all four lanes (each below 2^25);
 * - four neighbouring columns are summed together, so each step loads one X and one Y vector for
 *   four dots (the other Y vectors slide along in locals); blocks of 4 steps keep the live vectors
 *   within the 16 registers the engine uses, which measured faster than blocks of 8;
 * - column sums are split into a low 13-bit part and a carry only every 28 steps, so an i32 lane
 *   never exceeds 2^32 (28 * 2 * 8191^2 + carry < 2^32, read unsigned);
 * - the low-order dots of a column use zero X vectors below X[0] and zero Y vectors above L as
 *   padding, so block counts round up without branches.
 */
import { writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import wabtInit from 'wabt';

/**
 * Bits per limb. Limbs and the reduction digits q must stay below 2^15 (signed i16 lanes). 13 bits
 * measured fastest: 12 needs 15% more dots (171 limbs instead of 158 at 2048 bits), 14 must split
 * column sums after every 7 dots.
 */
export const LIMB_BITS = 13;
const MASK = 2 ** LIMB_BITS - 1;
/** Largest limb count served: R = 2^(LIMB_BITS * L) > 4n for 3072-bit n. */
export const MAX_LIMBS = Math.ceil((3072 + 2) / LIMB_BITS);
const MAX_PADDED = Math.ceil(MAX_LIMBS / 4) * 4; // limbs per slot rounded up to a multiple of 4
const V = 16; // bytes per v128
const LOG_STEPS = 2; // 4 steps a block measured faster than 8 (fewer spilled registers); must stay a multiple of 4
const STEPS = 1 << LOG_STEPS; // values of i per unrolled block
/** Blocks between splits: dots (each below 2 * MASK^2) plus a low part and carry below 2^23 stay below 2^32. */
const CHUNK = Math.floor(Math.floor((2 ** 32 - 2 ** 23) / (2 * MASK * MASK)) / STEPS);
if ((MAX_LIMBS * 2 * MASK * MASK) / 2 ** LIMB_BITS + MASK >= 2 ** 23 || CHUNK < 1) throw new Error('limb size leaves no room');

/** Byte offsets of the fixed areas; exported from the module as immutable globals. */
export const LAYOUT = (() => {
  const modulusShifted = 0; // MAX_PADDED vectors: splat(n_j << 16)
  const negInverse = modulusShifted + MAX_PADDED * V; // splat(-n^-1 mod 2^LIMB_BITS)
  const lowLimb = negInverse + V; // splat(n_0)
  const yZeros = lowLimb + V; // 8 zero vectors below Y[0]
  const y = yZeros + 8 * V; // MAX_PADDED + 16 vectors: lanes (b_j, n_j), zero above L
  const xZeros = y + (MAX_PADDED + 16) * V; // 8 zero vectors below X[0]
  const x = xZeros + 8 * V; // MAX_PADDED + 16 vectors: lanes (a_i, q_i), zero above L
  const out = x + (MAX_PADDED + 16) * V; // MAX_PADDED + 8 vectors: result limbs by lane
  const hi = out + (MAX_PADDED + 8) * V; // 5 vectors: the high parts of four column sums, the carry
  const index = hi + 5 * V; // three arrays of indexCapacity u32: out, left, right
  const indexCapacity = 1024;
  const slots = 32768; // slot s at slots + s * slotBytes; slot -1 is the scratch output
  if (index + 3 * 4 * indexCapacity > slots - MAX_PADDED * 4) throw new Error('layout overlap');
  return { modulusShifted, negInverse, lowLimb, y, x, out, hi, index, indexCapacity, slots };
})();

/** i8x16.shuffle lane bytes picking i32 lanes (0-3 from the first operand, 4-7 the second). */
function pick32(...lanes: number[]): string {
  return lanes.flatMap((l) => [0, 1, 2, 3].map((b) => l * 4 + b)).join(' ');
}

/** 4x4 transpose of i32 lanes: $v0..$v3 in, $c0..$c3 out. */
function transpose(): string {
  const lo = pick32(0, 4, 1, 5);
  const hi = pick32(2, 6, 3, 7);
  const first = pick32(0, 1, 4, 5);
  const second = pick32(2, 3, 6, 7);
  return `
      (local.set $t0 (i8x16.shuffle ${lo} (local.get $v0) (local.get $v1)))
      (local.set $t1 (i8x16.shuffle ${lo} (local.get $v2) (local.get $v3)))
      (local.set $t2 (i8x16.shuffle ${hi} (local.get $v0) (local.get $v1)))
      (local.set $t3 (i8x16.shuffle ${hi} (local.get $v2) (local.get $v3)))
      (local.set $c0 (i8x16.shuffle ${first} (local.get $t0) (local.get $t1)))
      (local.set $c1 (i8x16.shuffle ${second} (local.get $t0) (local.get $t1)))
      (local.set $c2 (i8x16.shuffle ${first} (local.get $t2) (local.get $t3)))
      (local.set $c3 (i8x16.shuffle ${second} (local.get $t2) (local.get $t3)))`;
}

/**
 * Sums four neighbouring columns k + c (c = 0..3) at once over $blocks blocks of STEPS values of i,
 * starting at X[$px]: column k + c adds dot(X[i], Y[k + c - i]). Each step loads one X and one Y
 * vector and does four dots; the three other Y vectors are kept in a sliding window $y0..$y3 (the
 * window is loaded before the first block). $py points STEPS - 1 vectors below Y[k - i] for the block's
 * first i. Every CHUNK blocks (at most 31 dots per lane and column) each sum is split into its low
 * bits in $acc<c> and the rest added to its vector in the hi area.
 */
function columnSum(label: string): string {
  const steps: string[] = [];
  for (let m = 0; m < STEPS; m++) {
    const slot = (c: number) => `$y${(((c - m) % 4) + 4) % 4}`;
    steps.push(`
            (local.set ${slot(0)} (v128.load offset=${(STEPS - 1 - m) * V} (local.get $py)))
            (local.set $xi (v128.load offset=${m * V} (local.get $px)))`);
    for (let c = 0; c < 4; c++) {
      steps.push(`
            (local.set $acc${c} (i32x4.add (local.get $acc${c}) (i32x4.dot_i16x8_s (local.get $xi) (local.get ${slot(c)}))))`);
    }
  }
  const split = [0, 1, 2, 3]
    .map(
      (c) => `
        (v128.store (i32.const ${LAYOUT.hi + c * V}) (i32x4.add (v128.load (i32.const ${LAYOUT.hi + c * V})) (i32x4.shr_u (local.get $acc${c}) (i32.const ${LIMB_BITS}))))
        (local.set $acc${c} (v128.and (local.get $acc${c}) (v128.const i32x4 ${MASK} ${MASK} ${MASK} ${MASK})))`,
    )
    .join('');
  const zero = '(v128.const i32x4 0 0 0 0)';
  return `
      (local.set $acc0 ${zero}) (local.set $acc1 ${zero}) (local.set $acc2 ${zero}) (local.set $acc3 ${zero})
      ${[0, 1, 2, 3].map((c) => `(v128.store (i32.const ${LAYOUT.hi + c * V}) ${zero})`).join(' ')}
      (local.set $y1 (v128.load offset=${STEPS * V} (local.get $py)))
      (local.set $y2 (v128.load offset=${(STEPS + 1) * V} (local.get $py)))
      (local.set $y3 (v128.load offset=${(STEPS + 2) * V} (local.get $py)))
      (block $${label}_done (loop $${label}_chunk
        (br_if $${label}_done (i32.eqz (local.get $blocks)))
        (local.set $nb (select (local.get $blocks) (i32.const ${CHUNK}) (i32.lt_u (local.get $blocks) (i32.const ${CHUNK}))))
        (local.set $blocks (i32.sub (local.get $blocks) (local.get $nb)))
        (loop $${label}_block${steps.join('')}
          (local.set $px (i32.add (local.get $px) (i32.const ${STEPS * V})))
          (local.set $py (i32.sub (local.get $py) (i32.const ${STEPS * V})))
          (local.set $nb (i32.sub (local.get $nb) (i32.const 1)))
          (br_if $${label}_block (local.get $nb)))${split}
        (br $${label}_chunk)))`;
}

const MASKS = `(v128.const i32x4 ${MASK} ${MASK} ${MASK} ${MASK})`;
/** The carry between column groups: loaded before a group's tails, stored after them. */
const CARRY_IN = `        (local.set $carry (v128.load (i32.const ${LAYOUT.hi + 4 * V})))`;
const CARRY_OUT = `        (v128.store (i32.const ${LAYOUT.hi + 4 * V}) (local.get $carry))`;

/**
 * Finishes low column k + c: adds the terms i = k..k+c, picks q_{k+c} and shifts out LIMB_BITS
 * zero bits. Within a group's four tails the carry ($carry) and the new X vectors ($x0..$x3) stay
 * in locals, so the chain from one column's q to the next runs through registers; between groups
 * the carry waits in memory (a local live across the column sums would crowd their registers).
 */
function lowTail(c: number): string {
  const L = LAYOUT;
  // Terms known before q_{k+c-1} first; the carry and the newest X vector (holding q_{k+c-1}) last,
  // so the chain from one q to the next is as short as possible.
  const dot = (d: number) => `(i32x4.dot_i16x8_s (local.get $x${d}) (v128.load (i32.const ${L.y + (c - d) * V})))`;
  let early = `(i32x4.add (local.get $acc${c}) ${dot(c)})`;
  for (let d = 0; d < c - 1; d++) early = `(i32x4.add ${early} ${dot(d)})`;
  const late = c > 0 ? `(i32x4.add (local.get $carry) ${dot(c - 1)})` : '(local.get $carry)';
  return `
        (if (i32.lt_u (i32.add (local.get $k) (i32.const ${c})) (local.get $limbs)) (then
          (local.set $sum (i32x4.add ${early} ${late}))
          (local.set $xi (v128.and (i32x4.mul (local.get $sum) (v128.load (i32.const ${L.negInverse}))) ${MASKS}))
          (local.set $x${c} (v128.or (local.get $x${c}) (i32x4.shl (local.get $xi) (i32.const 16))))
          (v128.store offset=${L.x + c * V} (local.get $j) (local.get $x${c}))
          (local.set $sum (i32x4.add (local.get $sum) (i32x4.mul (local.get $xi) (v128.load (i32.const ${L.lowLimb})))))
          (local.set $carry (i32x4.add (v128.load (i32.const ${L.hi + c * V})) (i32x4.shr_u (local.get $sum) (i32.const ${LIMB_BITS}))))))`;
}

/** Finishes high column k + c: its low LIMB_BITS bits are result limb k + c - L. */
function highTail(c: number): string {
  const L = LAYOUT;
  return `
        (local.set $sum (i32x4.add (local.get $carry) (local.get $acc${c})))
        (v128.store offset=${L.out + c * V} (local.get $j) (v128.and (local.get $sum) ${MASKS}))
        (local.set $carry (i32x4.add (v128.load (i32.const ${L.hi + c * V})) (i32x4.shr_u (local.get $sum) (i32.const ${LIMB_BITS}))))`;
}

/** The module's text. */
export function kernelText(): string {
  const L = LAYOUT;
  const slotAddress = (field: number, lane: number) =>
    `(i32.add (i32.const ${L.slots}) (i32.mul (i32.load offset=${field * 4 * L.indexCapacity + lane * 4} (local.get $idx)) (local.get $slotBytes)))`;
  const gather = (name: string, p: string, dst: number, orWith: number | null) => `
    (local.set $j (i32.const 0))
    (loop $${name}
      (local.set $v0 (v128.load (i32.add (local.get $${p}0) (local.get $j))))
      (local.set $v1 (v128.load (i32.add (local.get $${p}1) (local.get $j))))
      (local.set $v2 (v128.load (i32.add (local.get $${p}2) (local.get $j))))
      (local.set $v3 (v128.load (i32.add (local.get $${p}3) (local.get $j))))${transpose()}
      (local.set $q (i32.shl (local.get $j) (i32.const 2)))
${[0, 1, 2, 3]
  .map((m) => {
    const value = orWith === null ? `(local.get $c${m})` : `(v128.or (local.get $c${m}) (v128.load offset=${orWith + m * V} (local.get $q)))`;
    return `      (v128.store offset=${dst + m * V} (local.get $q) ${value})`;
  })
  .join('\n')}
      (local.set $j (i32.add (local.get $j) (i32.const 16)))
      (br_if $${name} (i32.lt_u (local.get $j) (local.get $slotBytes))))`;
  return `(module
  (memory (export "memory") 1)
  (global (export "limbBits") i32 (i32.const ${LIMB_BITS}))
  (global (export "maxLimbs") i32 (i32.const ${MAX_LIMBS}))
  (global (export "modulusShifted") i32 (i32.const ${L.modulusShifted}))
  (global (export "negInverse") i32 (i32.const ${L.negInverse}))
  (global (export "lowLimb") i32 (i32.const ${L.lowLimb}))
  (global (export "index") i32 (i32.const ${L.index}))
  (global (export "indexCapacity") i32 (i32.const ${L.indexCapacity}))
  (global (export "slots") i32 (i32.const ${L.slots}))
  ;; multiply(groups, limbs, slotBytes): for each group g of four lanes, reads slot indices from the
  ;; index area (out, left, right; index -1 is the scratch slot) and writes out = left * right / R.
  (func (export "multiply") (param $groups i32) (param $limbs i32) (param $slotBytes i32)
    (local $g i32) (local $idx i32) (local $j i32) (local $q i32) (local $k i32)
    (local $px i32) (local $py i32) (local $blocks i32) (local $nb i32)
    (local $o0 i32) (local $o1 i32) (local $o2 i32) (local $o3 i32)
    (local $l0 i32) (local $l1 i32) (local $l2 i32) (local $l3 i32)
    (local $r0 i32) (local $r1 i32) (local $r2 i32) (local $r3 i32)
    (local $v0 v128) (local $v1 v128) (local $v2 v128) (local $v3 v128)
    (local $t0 v128) (local $t1 v128) (local $t2 v128) (local $t3 v128)
    (local $c0 v128) (local $c1 v128) (local $c2 v128) (local $c3 v128)
    (local $acc0 v128) (local $acc1 v128) (local $acc2 v128) (local $acc3 v128)
    (local $y0 v128) (local $y1 v128) (local $y2 v128) (local $y3 v128) (local $xi v128)
    (local $sum v128) (local $carry v128) (local $x0 v128) (local $x1 v128) (local $x2 v128) (local $x3 v128)
    (block $end (loop $group
      (br_if $end (i32.ge_u (local.get $g) (local.get $groups)))
      (local.set $idx (i32.add (i32.const ${L.index}) (i32.shl (local.get $g) (i32.const 4))))
${[0, 1, 2, 3].map((m) => `      (local.set $o${m} ${slotAddress(0, m)})`).join('\n')}
${[0, 1, 2, 3].map((m) => `      (local.set $l${m} ${slotAddress(1, m)})`).join('\n')}
${[0, 1, 2, 3].map((m) => `      (local.set $r${m} ${slotAddress(2, m)})`).join('\n')}
      ;; X[i] = (a_i, 0) and Y[j] = (b_j, n_j), lanes gathered from four slots
${gather('gatherLeft', 'l', L.x, null)}
${gather('gatherRight', 'r', L.y, L.modulusShifted)}
      ;; low columns k < L, four at a time: the shared sum runs over i < k (padded below 0 with
      ;; zero X vectors); the tail adds i = k..k+c and sets q for each column in turn
      (v128.store (i32.const ${LAYOUT.hi + 4 * V}) (v128.const i32x4 0 0 0 0))
      (local.set $k (i32.const 0))
      (loop $low
        (local.set $blocks (i32.shr_u (i32.add (local.get $k) (i32.const ${STEPS - 1})) (i32.const ${LOG_STEPS})))
        (local.set $px (i32.add (i32.const ${L.x}) (i32.shl (i32.sub (local.get $k) (i32.shl (local.get $blocks) (i32.const ${LOG_STEPS}))) (i32.const 4))))
        (local.set $py (i32.add (i32.const ${L.y - (STEPS - 1) * V}) (i32.shl (local.get $blocks) (i32.const ${LOG_STEPS + 4}))))
${columnSum('low')}
        (local.set $j (i32.shl (local.get $k) (i32.const 4)))
${CARRY_IN}
${[0, 1, 2, 3].map((c) => `        (local.set $x${c} (v128.load offset=${L.x + c * V} (local.get $j)))`).join('\n')}
${[0, 1, 2, 3].map(lowTail).join('')}
${CARRY_OUT}
        (local.set $k (i32.add (local.get $k) (i32.const 4)))
        (br_if $low (i32.lt_u (local.get $k) (local.get $limbs))))
      ;; high columns k = L .. 2L-1, four at a time: the sum runs over i = k-L+1 .. L-1 (terms
      ;; outside a column's range meet zero Y or X vectors); each column yields limb k - L
      (local.set $k (local.get $limbs))
      (loop $high
        (local.set $j (i32.sub (local.get $k) (local.get $limbs)))
        (local.set $blocks (i32.shr_u (i32.sub (i32.add (local.get $limbs) (i32.const ${STEPS - 2})) (local.get $j)) (i32.const ${LOG_STEPS})))
        (local.set $px (i32.add (i32.const ${L.x + V}) (i32.shl (local.get $j) (i32.const 4))))
        (local.set $py (i32.add (i32.const ${L.y - STEPS * V}) (i32.shl (local.get $limbs) (i32.const 4))))
${columnSum('high')}
        (local.set $j (i32.shl (local.get $j) (i32.const 4)))
${CARRY_IN}
${[0, 1, 2, 3].map(highTail).join('')}
${CARRY_OUT}
        (local.set $k (i32.add (local.get $k) (i32.const 4)))
        (br_if $high (i32.lt_u (local.get $k) (i32.shl (local.get $limbs) (i32.const 1)))))
      ;; scatter the result limbs back to the four output slots
      (local.set $j (i32.const 0))
      (loop $scatter
        (local.set $q (i32.shl (local.get $j) (i32.const 2)))
        (local.set $v0 (v128.load offset=${L.out} (local.get $q)))
        (local.set $v1 (v128.load offset=${L.out + V} (local.get $q)))
        (local.set $v2 (v128.load offset=${L.out + 2 * V} (local.get $q)))
        (local.set $v3 (v128.load offset=${L.out + 3 * V} (local.get $q)))${transpose()}
${[0, 1, 2, 3].map((m) => `        (v128.store (i32.add (local.get $o${m}) (local.get $j)) (local.get $c${m}))`).join('\n')}
        (local.set $j (i32.add (local.get $j) (i32.const 16)))
        (br_if $scatter (i32.lt_u (local.get $j) (local.get $slotBytes))))
      (local.set $g (i32.add (local.get $g) (i32.const 1)))
      (br $group)))
  )
)
`;
}

/** Assembles the module text with wabt; deterministic, so the committed binary can be checked. */
export async function generateKernelWasm(): Promise<Uint8Array> {
  const wabt = await wabtInit();
  const parsed = wabt.parseWat('kernel.wat', kernelText(), { simd: true });
  try {
    parsed.resolveNames();
    parsed.validate();
    return new Uint8Array(parsed.toBinary({ log: false, write_debug_names: false }).buffer);
  } finally {
    parsed.destroy();
  }
}

/** Where the committed binary lives. */
export const KERNEL_PATH = fileURLToPath(new URL('../../core/montgomery/kernel.wasm', import.meta.url));

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const bytes = await generateKernelWasm();
  writeFileSync(KERNEL_PATH, bytes);
  console.log(`wrote ${KERNEL_PATH} (${bytes.length} bytes)`);
}
