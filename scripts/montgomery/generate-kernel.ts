/**
 * Generates the Montgomery multiplication kernel (WebAssembly text) and assembles it with wabt.
 *
 *   npx tsx scripts/montgomery/generate-kernel.ts      writes core/montgomery/kernel.wasm
 *
 * One module serves both 2048- and 3072-bit moduli: the limb count is an argument of `multiply`
 * and the code loops (4 steps unrolled), so the module stays a few kilobytes. The binary is committed because Workers
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
 *
 * `multiplyOnes` serves moduli whose low m limbs are all ones, n = h 2^(13m) - 1 (the client's key
 * generation makes them; core/pir/keys.ts). Written with n'_0 = -1 and n'_j = h_(j-m) (zero for
 * 0 < j < m), column k's own reduction term is -q_k, so q_k is simply the column's low 13 bits, and
 * its other terms q_i h_(k-m-i) need only digits finished m columns earlier. Products and reduction
 * terms are then summed separately as adjacent-limb pairs, (a_2u, a_2u+1) . (b_k-2u, b_k-2u-1) and
 * (q_2u, q_2u+1) . (h_j, h_j-1): L^2/2 + L(L-m)/2 dots instead of L^2, three quarters for
 * m = L/2. A schedule written by the caller (core/montgomery/ones-schedule.ts) gives each group of
 * four columns its ranges.
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
/**
 * Steps per block of the paired sums (multiplyOnes). Two, not four: the engine loads a whole block
 * up front, and four steps of three loads each spilled two sums per block (measured 1.2x slower).
 * Must stay even, so the window of Y vectors, moving two a step, lines up from block to block.
 */
export const PAIR_STEPS = 2;
/** Dots a sum may take between splits: each below 2 * MASK^2, plus a low part and carry below 2^23, stay below 2^32. */
const CHUNK_DOTS = Math.floor((2 ** 32 - 2 ** 23) / (2 * MASK * MASK));
if ((MAX_LIMBS * 2 * MASK * MASK) / 2 ** LIMB_BITS + MASK >= 2 ** 23 || CHUNK_DOTS < STEPS) throw new Error('limb size leaves no room');

/** Zero vectors around the pair arrays, so blocks rounded up to PAIR_STEPS read zeros past either end. */
const PAD = 16;
/** multiplyOnes schedule entry: k, then (x address, y address, blocks) for the product and the reduction sums. */
export const SCHEDULE_ENTRY = 32;

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
  // multiplyOnes: adjacent-limb pairs of both operands, of the digits q and of the modulus' high part
  const pairLeft = index + 3 * 4 * indexCapacity; // MAX_PADDED / 2 + PAD vectors: (a_2u, a_2u+1)
  const pairRight = pairLeft + (MAX_PADDED / 2 + PAD) * V + PAD * V; // PAD zero vectors below; (b_j, b_j-1)
  const pairDigits = pairRight + (MAX_PADDED + 1 + PAD) * V; // MAX_PADDED / 2 + PAD vectors: (q_2u, q_2u+1)
  const pairModulus = pairDigits + (MAX_PADDED / 2 + PAD) * V + PAD * V; // PAD zero vectors below; (h_j, h_j-1)
  const schedule = pairModulus + (MAX_PADDED + 1 + PAD) * V; // SCHEDULE_ENTRY bytes per column group
  const scheduleCapacity = MAX_PADDED / 2 + 4;
  const slots = 65536; // slot s at slots + s * slotBytes; slot -1 is the scratch output
  if (schedule + scheduleCapacity * SCHEDULE_ENTRY > slots - MAX_PADDED * 4) throw new Error('layout overlap');
  return {
    modulusShifted, negInverse, lowLimb, y, x, out, hi, index, indexCapacity,
    pairLeft, pairRight, pairDigits, pairModulus, schedule, scheduleCapacity, slots,
  };
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
 * first i. Every few blocks (at most CHUNK_DOTS dots per lane and column) each sum is split into its low
 * bits in $acc<c> and the rest added to its vector in the hi area.
 */
function columnSum(label: string): string {
  const steps: string[] = [];
  for (let m = 0; m < STEPS; m++) {
    const slot = (c: number) => `$y${(((c - m) % 4) + 4) % 4}`;
    steps.push(`
            (local.set ${slot(0)} (v128.load offset=${(STEPS - 1 - m) * V} (local.get $py)))
            (local.set $xi (v128.load offset=${m * V} (local.get $px)))`);
    for (let c = 0; c < 4; c++) steps.push(dotInto(c, slot(c)));
  }
  return `${resetSums()}
      (local.set $y1 (v128.load offset=${STEPS * V} (local.get $py)))
      (local.set $y2 (v128.load offset=${(STEPS + 1) * V} (local.get $py)))
      (local.set $y3 (v128.load offset=${(STEPS + 2) * V} (local.get $py)))${chunkedBlocks(label, steps.join(''), STEPS, STEPS * V)}`;
}

/**
 * columnSum for adjacent-limb pairs: X[u] holds (x_2u, x_2u+1) and Y[j] holds (y_j, y_j-1), so
 * dot(X[u], Y[k - 2u]) adds both terms x_2u y_k-2u + x_2u+1 y_k-2u-1 of column k. Column k + c
 * uses Y[k + c - 2u]: the window moves two vectors a step, so a step loads one X and two Y vectors
 * for four dots. $py points at Y[k - 2 u0 - 2 (PAIR_STEPS - 1)] for the block's first u = u0.
 * With `reset` false the sums go on from the previous pass (the reduction adds to the product's).
 */
function pairedColumnSum(label: string, reset: boolean): string {
  const steps: string[] = [];
  for (let m = 0; m < PAIR_STEPS; m++) {
    const slot = (c: number) => `$y${(((c - 2 * m) % 4) + 4) % 4}`;
    const offset = (c: number) => (c - 2 * m + 2 * (PAIR_STEPS - 1)) * V;
    steps.push(`
            (local.set ${slot(0)} (v128.load offset=${offset(0)} (local.get $py)))
            (local.set ${slot(1)} (v128.load offset=${offset(1)} (local.get $py)))
            (local.set $xi (v128.load offset=${m * V} (local.get $px)))`);
    for (let c = 0; c < 4; c++) steps.push(dotInto(c, slot(c)));
  }
  return `${reset ? resetSums() : ''}
      (local.set $y2 (v128.load offset=${(2 + 2 * (PAIR_STEPS - 1)) * V} (local.get $py)))
      (local.set $y3 (v128.load offset=${(3 + 2 * (PAIR_STEPS - 1)) * V} (local.get $py)))${chunkedBlocks(label, steps.join(''), PAIR_STEPS, 2 * PAIR_STEPS * V)}`;
}

function dotInto(c: number, y: string): string {
  return `
            (local.set $acc${c} (i32x4.add (local.get $acc${c}) (i32x4.dot_i16x8_s (local.get $xi) (local.get ${y}))))`;
}

function resetSums(): string {
  const zero = '(v128.const i32x4 0 0 0 0)';
  return `
      (local.set $acc0 ${zero}) (local.set $acc1 ${zero}) (local.set $acc2 ${zero}) (local.set $acc3 ${zero})
      ${[0, 1, 2, 3].map((c) => `(v128.store (i32.const ${LAYOUT.hi + c * V}) ${zero})`).join(' ')}`;
}

/**
 * Runs $blocks blocks of `steps` (X moves up one vector a step, Y down `yStride` bytes a block),
 * splitting each sum into its low bits in $acc<c> and the rest in its hi vector after at most
 * CHUNK_DOTS dots.
 */
function chunkedBlocks(label: string, steps: string, stepsPerBlock: number, yStride: number): string {
  const chunk = Math.floor(CHUNK_DOTS / stepsPerBlock);
  const split = [0, 1, 2, 3]
    .map(
      (c) => `
        (v128.store (i32.const ${LAYOUT.hi + c * V}) (i32x4.add (v128.load (i32.const ${LAYOUT.hi + c * V})) (i32x4.shr_u (local.get $acc${c}) (i32.const ${LIMB_BITS}))))
        (local.set $acc${c} (v128.and (local.get $acc${c}) (v128.const i32x4 ${MASK} ${MASK} ${MASK} ${MASK})))`,
    )
    .join('');
  return `
      (block $${label}_done (loop $${label}_chunk
        (br_if $${label}_done (i32.eqz (local.get $blocks)))
        (local.set $nb (select (local.get $blocks) (i32.const ${chunk}) (i32.lt_u (local.get $blocks) (i32.const ${chunk}))))
        (local.set $blocks (i32.sub (local.get $blocks) (local.get $nb)))
        (loop $${label}_block${steps}
          (local.set $px (i32.add (local.get $px) (i32.const ${stepsPerBlock * V})))
          (local.set $py (i32.sub (local.get $py) (i32.const ${yStride})))
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

/**
 * Finishes low column k + c of multiplyOnes, where n = h 2^(LIMB_BITS m) - 1: the column's own
 * reduction term is -q_{k+c}, so q_{k+c} is the column's low bits (no product on the chain from
 * one column to the next); it is stored in the digit pairs for the reduction sums of later columns.
 */
function lowTailOnes(c: number): string {
  const L = LAYOUT;
  const pair = L.pairDigits + (c >> 1) * V;
  const store = c % 2 === 0
    ? `(local.set $x0 (local.get $xi)) (v128.store offset=${pair} (local.get $j) (local.get $xi))`
    : `(v128.store offset=${pair} (local.get $j) (v128.or (local.get $x0) (i32x4.shl (local.get $xi) (i32.const 16))))`;
  return `
        (if (i32.lt_u (i32.add (local.get $k) (i32.const ${c})) (local.get $limbs)) (then
          (local.set $sum (i32x4.add (local.get $acc${c}) (local.get $carry)))
          (local.set $xi (v128.and (local.get $sum) ${MASKS}))
          ${store}
          (local.set $carry (i32x4.add (v128.load (i32.const ${L.hi + c * V})) (i32x4.shr_u (local.get $sum) (i32.const ${LIMB_BITS}))))))`;
}

/** The module's text. */
export function kernelText(): string {
  const L = LAYOUT;
  const slotAddress = (field: number, lane: number) =>
    `(i32.add (i32.const ${L.slots}) (i32.mul (i32.load offset=${field * 4 * L.indexCapacity + lane * 4} (local.get $idx)) (local.get $slotBytes)))`;
  /** Loads limbs j..j+3 of the four lanes' slots and transposes them into $c0..$c3 (one vector per limb). */
  const loadLimbs = (p: string) => `
      (local.set $v0 (v128.load (i32.add (local.get $${p}0) (local.get $j))))
      (local.set $v1 (v128.load (i32.add (local.get $${p}1) (local.get $j))))
      (local.set $v2 (v128.load (i32.add (local.get $${p}2) (local.get $j))))
      (local.set $v3 (v128.load (i32.add (local.get $${p}3) (local.get $j))))${transpose()}`;
  const gather = (name: string, p: string, dst: number, orWith: number | null) => `
    (local.set $j (i32.const 0))
    (loop $${name}${loadLimbs(p)}
      (local.set $q (i32.shl (local.get $j) (i32.const 2)))
${[0, 1, 2, 3]
  .map((m) => {
    const value = orWith === null ? `(local.get $c${m})` : `(v128.or (local.get $c${m}) (v128.load offset=${orWith + m * V} (local.get $q)))`;
    return `      (v128.store offset=${dst + m * V} (local.get $q) ${value})`;
  })
  .join('\n')}
      (local.set $j (i32.add (local.get $j) (i32.const 16)))
      (br_if $${name} (i32.lt_u (local.get $j) (local.get $slotBytes))))`;
  const pair = (low: string, high: string) => `(v128.or (local.get ${low}) (i32x4.shl (local.get ${high}) (i32.const 16)))`;
  // (a_2u, a_2u+1) pairs of the left operand: limbs j..j+3 give pairs j/2 and j/2 + 1.
  const gatherLeftPairs = `
    (local.set $j (i32.const 0))
    (loop $gatherLeftPairs${loadLimbs('l')}
      (local.set $q (i32.shl (local.get $j) (i32.const 1)))
      (v128.store offset=${L.pairLeft} (local.get $q) ${pair('$c0', '$c1')})
      (v128.store offset=${L.pairLeft + V} (local.get $q) ${pair('$c2', '$c3')})
      (local.set $j (i32.add (local.get $j) (i32.const 16)))
      (br_if $gatherLeftPairs (i32.lt_u (local.get $j) (local.get $slotBytes))))`;
  // (b_j, b_j-1) pairs of the right operand, b_-1 = 0, and the last pair (0, b_top) past the slot.
  const gatherRightPairs = `
    (local.set $j (i32.const 0))
    (local.set $x0 (v128.const i32x4 0 0 0 0))
    (loop $gatherRightPairs${loadLimbs('r')}
      (local.set $q (i32.shl (local.get $j) (i32.const 2)))
      (v128.store offset=${L.pairRight} (local.get $q) ${pair('$c0', '$x0')})
      (v128.store offset=${L.pairRight + V} (local.get $q) ${pair('$c1', '$c0')})
      (v128.store offset=${L.pairRight + 2 * V} (local.get $q) ${pair('$c2', '$c1')})
      (v128.store offset=${L.pairRight + 3 * V} (local.get $q) ${pair('$c3', '$c2')})
      (local.set $x0 (local.get $c3))
      (local.set $j (i32.add (local.get $j) (i32.const 16)))
      (br_if $gatherRightPairs (i32.lt_u (local.get $j) (local.get $slotBytes))))
    (v128.store offset=${L.pairRight} (i32.shl (local.get $slotBytes) (i32.const 2)) (i32x4.shl (local.get $x0) (i32.const 16)))`;
  const locals = `
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
    (local $sum v128) (local $carry v128) (local $x0 v128) (local $x1 v128) (local $x2 v128) (local $x3 v128)`;
  const groupStart = `
    (block $end (loop $group
      (br_if $end (i32.ge_u (local.get $g) (local.get $groups)))
      (local.set $idx (i32.add (i32.const ${L.index}) (i32.shl (local.get $g) (i32.const 4))))
${[0, 1, 2, 3].map((m) => `      (local.set $o${m} ${slotAddress(0, m)})`).join('\n')}
${[0, 1, 2, 3].map((m) => `      (local.set $l${m} ${slotAddress(1, m)})`).join('\n')}
${[0, 1, 2, 3].map((m) => `      (local.set $r${m} ${slotAddress(2, m)})`).join('\n')}`;
  const groupEnd = `
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
      (br $group)))`;
  /** Reads (x address, y address, blocks) of a schedule entry at byte `at`. */
  const scheduled = (at: number) =>
    `        (local.set $px (i32.load offset=${at} (local.get $j))) (local.set $py (i32.load offset=${at + 4} (local.get $j))) (local.set $blocks (i32.load offset=${at + 8} (local.get $j)))`;
  // Constants the wrapper (core/montgomery/kernel.ts) reads: limb size and byte offsets of the areas.
  const constants = {
    limbBits: LIMB_BITS, maxLimbs: MAX_LIMBS, modulusShifted: L.modulusShifted, negInverse: L.negInverse, lowLimb: L.lowLimb,
    index: L.index, indexCapacity: L.indexCapacity, pairModulus: L.pairModulus, pairLeft: L.pairLeft, pairRight: L.pairRight,
    pairDigits: L.pairDigits, schedule: L.schedule, scheduleCapacity: L.scheduleCapacity, slots: L.slots,
  };
  const globals = Object.entries(constants)
    .map(([name, value]) => `  (global (export "${name}") i32 (i32.const ${value}))`)
    .join('\n');
  return `(module
  (memory (export "memory") 1)
${globals}
  ;; multiply(groups, limbs, slotBytes): for each group g of four lanes, reads slot indices from the
  ;; index area (out, left, right; index -1 is the scratch slot) and writes out = left * right / R.
  (func (export "multiply") (param $groups i32) (param $limbs i32) (param $slotBytes i32)${locals}${groupStart}
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
        (br_if $high (i32.lt_u (local.get $k) (i32.shl (local.get $limbs) (i32.const 1)))))${groupEnd}
  )
  ;; multiplyOnes(groups, limbs, slotBytes, entries): multiply for a modulus n = h 2^(13m) - 1
  ;; (its low m limbs all ones), whose reduction digit q_k is column k's low bits and whose
  ;; reduction terms q_i h_(k-m-i) come long after q_i is known. Products and reduction terms are
  ;; summed as adjacent-limb pairs; the caller writes the pairs of h and one schedule entry per
  ;; group of four columns (low groups k = 0, 4, .. below L, then high groups k = L, L + 4, ..).
  (func (export "multiplyOnes") (param $groups i32) (param $limbs i32) (param $slotBytes i32) (param $entries i32)${locals}${groupStart}
${gatherLeftPairs}
${gatherRightPairs}
      (v128.store (i32.const ${LAYOUT.hi + 4 * V}) (v128.const i32x4 0 0 0 0))
      (local.set $q (i32.const 0))
      (loop $columns
        (local.set $j (i32.add (i32.const ${L.schedule}) (i32.shl (local.get $q) (i32.const 5))))
        (local.set $k (i32.load (local.get $j)))
${scheduled(4)}
${pairedColumnSum('product', true)}
        (local.set $j (i32.add (i32.const ${L.schedule}) (i32.shl (local.get $q) (i32.const 5))))
${scheduled(16)}
${pairedColumnSum('reduce', false)}
${CARRY_IN}
        (if (i32.lt_u (local.get $k) (local.get $limbs))
          (then
            (local.set $j (i32.shl (local.get $k) (i32.const 3)))${[0, 1, 2, 3].map(lowTailOnes).join('')})
          (else
            (local.set $j (i32.shl (i32.sub (local.get $k) (local.get $limbs)) (i32.const 4)))${[0, 1, 2, 3].map(highTail).join('')}))
${CARRY_OUT}
        (local.set $q (i32.add (local.get $q) (i32.const 1)))
        (br_if $columns (i32.lt_u (local.get $q) (local.get $entries))))${groupEnd}
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
