// Runtime-free wrapper around the WebAssembly Montgomery kernel (scripts/montgomery/generate-kernel.ts
// writes core/montgomery/kernel.wasm). Products are computed four at a time, one per SIMD lane.
// Loading: a Worker imports the .wasm (`import kernel from '.../kernel.wasm'`, a compiled module;
// Workers refuse to compile bytes at run time); Node uses scripts/montgomery/load-kernel-node.ts.
// One module serves 2048- and 3072-bit moduli alike.
import { modInverse } from '../bigint/modular.ts';
import type { ProductEngine } from '../pir/product-engine.ts';
import type { WireNumbers } from '../pir/wire.ts';
import { MIN_ONES_LIMBS, onesLimbs, onesSchedule, SCHEDULE_ENTRY_WORDS, type PairAreas } from './ones-schedule.ts';

/**
 * A ProductEngine (core/pir/product-engine.ts) whose slots hold values in Montgomery form below
 * 2n; set and get convert, multiplyMany runs four products per SIMD pass, setRandomNonZero draws
 * the Montgomery form directly (a uniform form is a uniform value), getMany converts back in
 * batches with a kernel product by a plain 1.
 */
/** A ProductEngine that also reports the bytes of its WebAssembly memory (slots plus fixed areas). */
export type MontgomeryKernel = ProductEngine & {
  readonly memoryBytes: number;
  /** All-ones low limbs of the modulus that multiplyOnes uses; 0 when the general multiply runs. */
  readonly onesLimbs: number;
};


/**
 * The kernel size a modulus needs: 2048 for odd n of at most 2048 bits, 3072 up to 3072 bits.
 * One module (core/montgomery/kernel.wasm) serves both sizes; the size picks the limb count.
 * Throws TypeError for a non-bigint and RangeError for an even n, n < 3, or n above 3072 bits.
 */
export function kernelBitsFor(n: bigint): 2048 | 3072 {
  if (typeof n !== 'bigint') throw new TypeError(`kernelBitsFor: expected bigint modulus, got ${typeof n}`);
  if (n < 3n || (n & 1n) === 0n) throw new RangeError(`kernelBitsFor: expected odd modulus >= 3, got ${n}`);
  const bits = n.toString(2).length;
  if (bits <= 2048) return 2048;
  if (bits <= 3072) return 3072;
  throw new RangeError(`kernelBitsFor: expected a modulus of at most 3072 bits, got ${bits} bits`);
}

export interface KernelExports {
  memory: WebAssembly.Memory;
  multiply: (groups: number, limbs: number, slotBytes: number) => void;
  multiplyOnes: (groups: number, limbs: number, slotBytes: number, entries: number) => void;
  pairLeft: WebAssembly.Global;
  pairRight: WebAssembly.Global;
  pairDigits: WebAssembly.Global;
  pairModulus: WebAssembly.Global;
  schedule: WebAssembly.Global;
  scheduleCapacity: WebAssembly.Global;
  limbBits: WebAssembly.Global;
  maxLimbs: WebAssembly.Global;
  modulusShifted: WebAssembly.Global;
  negInverse: WebAssembly.Global;
  lowLimb: WebAssembly.Global;
  index: WebAssembly.Global;
  indexCapacity: WebAssembly.Global;
  slots: WebAssembly.Global;
}

/**
 * One instance of the kernel module: its code and its memory. A kernel for a modulus is set up
 * over an instance (createMontgomeryKernel); an instance may serve one modulus after another, so
 * a server keeps its memory warm instead of allocating and touching tens of MB per query. Only
 * one kernel may use an instance at a time (its slots are that kernel's).
 */
export interface KernelInstance {
  readonly exports: KernelExports;
}

/** A fresh instance of the kernel module. Throws TypeError for a module without the kernel's exports. */
export function instantiateKernel(module: WebAssembly.Module): KernelInstance {
  return { exports: kernelExports(module) };
}

function kernelExports(module: WebAssembly.Module): KernelExports {
  if (!(module instanceof WebAssembly.Module)) {
    throw new TypeError(`createMontgomeryKernel: expected WebAssembly.Module, got ${typeof module}`);
  }
  const e = new WebAssembly.Instance(module, {}).exports as Partial<KernelExports>;
  const globals = [
    'limbBits', 'maxLimbs', 'modulusShifted', 'negInverse', 'lowLimb', 'index', 'indexCapacity', 'slots',
    'pairLeft', 'pairRight', 'pairDigits', 'pairModulus', 'schedule', 'scheduleCapacity',
  ] as const;
  const functions = [e.multiply, e.multiplyOnes];
  if (!(e.memory instanceof WebAssembly.Memory) || functions.some((f) => typeof f !== 'function') || globals.some((g) => !(e[g] instanceof WebAssembly.Global))) {
    throw new TypeError('createMontgomeryKernel: expected the Montgomery kernel module, got a module without its exports');
  }
  return e as KernelExports;
}

function checkSlotIndex(fn: string, slot: number, slots: number): void {
  if (!Number.isInteger(slot) || slot < 0 || slot >= slots) {
    throw new RangeError(`${fn}: expected slot index in [0, ${slots}), got ${slot}`);
  }
}

/**
 * A kernel instance for the odd modulus n (3 <= n, at most 3072 bits). Slot values are kept in
 * Montgomery form below 2n (R = 2^(13L) > 4n with the committed 13-bit limbs, so products of such
 * values stay below 2n).
 * multiplyMany's limb arithmetic has no data-dependent branches or memory addresses (its time
 * depends on the count and the slot indices only); set and get use BigInt and are variable-time.
 * Throws TypeError for a wrong module or argument types, RangeError for an even n, a size the
 * module does not serve, or out-of-range slots and values.
 */
export function createMontgomeryKernel(source: WebAssembly.Module | KernelInstance, n: bigint): MontgomeryKernel {
  const size = kernelBitsFor(n);
  const e = source instanceof WebAssembly.Module ? kernelExports(source) : source.exports;
  const limbBits = e.limbBits.value as number;
  // R = 2^(limbBits * L) > 4n for every n of the size, so products of values below 2n stay below 2n.
  const limbs = Math.ceil((size + 2) / limbBits);
  if (!Number.isInteger(limbBits) || limbBits < 8 || limbBits > 14) {
    throw new RangeError(`createMontgomeryKernel: expected a module with 8- to 14-bit limbs, got ${limbBits}`);
  }
  if (limbs > (e.maxLimbs.value as number)) {
    throw new RangeError(`createMontgomeryKernel: expected a module serving ${limbs} limbs, got at most ${e.maxLimbs.value}`);
  }
  const padded = Math.ceil(limbs / 4) * 4;
  const slotBytes = padded * 4;
  const shift = BigInt(limbs * limbBits);
  const rModN = (1n << shift) % n;
  const rInverse = modInverse(rModN, n);
  const rSquaredModN = (rModN * rModN) % n;
  const indexBase = (e.index.value as number) / 4;
  const capacity = e.indexCapacity.value as number;
  const slotBase = (e.slots.value as number) / 4;
  let words = new Uint32Array(e.memory.buffer);
  let slots = Math.floor((words.length - slotBase) / padded);
  let stamps = new Uint32Array(slots);
  let owners = new Uint32Array(slots);
  let stamp = 0;
  // Highest slot count asked for; getMany keeps its working slots above it.
  let reserved = 0;
  const bitLength = n.toString(2).length;
  // Per-limb masks keeping random limbs within n's bit length (higher limbs zero).
  const limbMasks = Uint32Array.from({ length: limbs }, (_, j) => {
    const bitsHere = Math.min(limbBits, Math.max(0, bitLength - j * limbBits));
    return 2 ** bitsHere - 1;
  });
  const randomLimbs = new Uint16Array(limbs);

  // The modulus, written once: splat(n_j << 16) per limb, -n^-1 mod 2^limbBits and n_0.
  const nLimbs = toLimbs(n, limbs, limbBits);
  // Every fixed area (modulus, scratch, pairs, schedule) starts from zeros, as in a fresh
  // instance: an instance may have served a longer modulus before (KernelInstance).
  words.fill(0, 0, slotBase);
  for (let j = 0; j < limbs; j++) words.fill(nLimbs[j]! << 16, (e.modulusShifted.value as number) / 4 + 4 * j, (e.modulusShifted.value as number) / 4 + 4 * j + 4);
  const digit = 2 ** limbBits;
  const negInverse = (digit - Number(modInverse(n % BigInt(digit), BigInt(digit)))) % digit;
  words.fill(negInverse, (e.negInverse.value as number) / 4, (e.negInverse.value as number) / 4 + 4);
  words.fill(nLimbs[0]!, (e.lowLimb.value as number) / 4, (e.lowLimb.value as number) / 4 + 4);

  // A modulus with all-ones low limbs, n = h 2^(limbBits m) - 1, takes multiplyOnes: the pairs
  // (h_j, h_j-1) splatted over the lanes and one schedule entry per group of four columns.
  const ones = onesLimbs(n, limbBits, limbs);
  let scheduleEntries = 0;
  if (ones >= MIN_ONES_LIMBS) {
    const hLimbs = toLimbs((n + 1n) >> BigInt(limbBits * ones), limbs, limbBits);
    let highLimbs = limbs;
    while (highLimbs > 1 && hLimbs[highLimbs - 1] === 0) highLimbs--;
    const pairsAt = (e.pairModulus.value as number) / 4;
    for (let j = 0; j <= limbs; j++) {
      const pair = (hLimbs[j] ?? 0) | ((hLimbs[j - 1] ?? 0) << 16);
      words.fill(pair, pairsAt + 4 * j, pairsAt + 4 * j + 4);
    }
    const areas = { pairLeft: e.pairLeft.value, pairRight: e.pairRight.value, pairDigits: e.pairDigits.value, pairModulus: e.pairModulus.value } as PairAreas;
    const schedule = onesSchedule(limbs, ones, highLimbs, areas);
    scheduleEntries = schedule.length / SCHEDULE_ENTRY_WORDS;
    if (scheduleEntries > (e.scheduleCapacity.value as number)) {
      throw new RangeError(`createMontgomeryKernel: expected at most ${e.scheduleCapacity.value} column groups, got ${scheduleEntries}`);
    }
    new Int32Array(e.memory.buffer).set(schedule, (e.schedule.value as number) / 4);
  }

  const writeValue = (slot: number, value: bigint) => {
    const limbValues = toLimbs(value, limbs, limbBits);
    const at = slotBase + slot * padded;
    words.set(limbValues, at);
    words.fill(0, at + limbs, at + padded);
  };

  const grow = (count: number) => {
    if (count <= slots) return;
    const neededBytes = (slotBase + count * padded) * 4;
    e.memory.grow(Math.ceil((neededBytes - e.memory.buffer.byteLength) / 65536));
    words = new Uint32Array(e.memory.buffer);
    slots = Math.floor((words.length - slotBase) / padded);
    const grown = new Uint32Array(slots);
    grown.set(stamps);
    stamps = grown;
    owners = new Uint32Array(slots);
  };

  /**
   * Puts plain values into `targets` (`place(i, at)` writes value i's limbs at words[at..]), then
   * multiplies each by R^2 mod n in one batch: (x R^2) / R = x R, the Montgomery form, without a
   * BigInt division per value (setMany from BigInts, setManyWire from wire bytes).
   */
  const enterDomain = (name: string, targets: ArrayLike<number>, place: (i: number, at: number) => void) => {
    const count = targets.length;
    const square = reserved;
    grow(square + 1);
    writeValue(square, rSquaredModN);
    const out = new Uint32Array(count);
    for (let i = 0; i < count; i++) {
      const slot = targets[i]!;
      checkSlotIndex(name, slot, square);
      place(i, slotBase + slot * padded);
      out[i] = slot;
    }
    kernel.multiplyMany(out, out, new Uint32Array(count).fill(square), count);
  };

  /**
   * Takes slots [first, first + count) out of the Montgomery domain, 1,024 at a time: a product
   * with a plain 1 gives (x R)(1) / R = x, below 2n. `each(i, at)` reads result i at words[at..]
   * (getMany as BigInts, getManyWire into wire bytes).
   */
  const leaveDomain = (first: number, count: number, each: (i: number, at: number) => void) => {
    const chunk = 1024;
    const one = Math.max(reserved, first + count);
    grow(one + 1 + chunk);
    writeValue(one, 1n);
    const target = Uint32Array.from({ length: chunk }, (_, i) => one + 1 + i);
    const ones = new Uint32Array(chunk).fill(one);
    const source = new Uint32Array(chunk);
    for (let start = 0; start < count; start += chunk) {
      const size = Math.min(chunk, count - start);
      for (let i = 0; i < size; i++) source[i] = first + start + i;
      kernel.multiplyMany(target, source, ones, size);
      for (let i = 0; i < size; i++) each(start + i, slotBase + (one + 1 + i) * padded);
    }
  };

  const kernel: MontgomeryKernel = {
    modulus: n,
    onesLimbs: scheduleEntries > 0 ? ones : 0,
    get slots() {
      return slots;
    },
    get memoryBytes() {
      return e.memory.buffer.byteLength;
    },
    ensureSlots(count: number) {
      if (!Number.isSafeInteger(count) || count < 0) throw new RangeError(`ensureSlots: expected integer count >= 0, got ${count}`);
      reserved = Math.max(reserved, count);
      // Room above for setMany's R^2 and getMany's plain 1 and chunk too, in the same growth:
      // every later growth of the memory would copy all of it.
      grow(count + 2 + 1024);
    },
    setRandomNonZero(slot: number) {
      checkSlotIndex('setRandomNonZero', slot, slots);
      const at = slotBase + slot * padded;
      for (;;) {
        crypto.getRandomValues(randomLimbs);
        let below = false;
        let zero = true;
        let decided = false;
        for (let j = limbs - 1; j >= 0; j--) {
          const limb = randomLimbs[j]! & limbMasks[j]!;
          words[at + j] = limb;
          if (limb !== 0) zero = false;
          if (!decided && limb !== nLimbs[j]) {
            below = limb < nLimbs[j]!;
            decided = true;
          }
        }
        if (below && !zero) break; // rejection keeps the draw uniform on [1, n)
      }
      words.fill(0, at + limbs, at + padded);
    },
    getMany(first: number, count: number) {
      if (!Number.isSafeInteger(first) || !Number.isSafeInteger(count) || first < 0 || count < 0 || first + count > slots) {
        throw new RangeError(`getMany: expected a slot range within [0, ${slots}), got ${first} + ${count}`);
      }
      const out: bigint[] = [];
      leaveDomain(first, count, (_, at) => {
        const value = fromLimbs(words.subarray(at, at + limbs), limbBits);
        out.push(value >= n ? value - n : value);
      });
      return out;
    },
    getManyWire(first: number, count: number, out: WireNumbers, at: number) {
      if (!Number.isSafeInteger(first) || !Number.isSafeInteger(count) || first < 0 || count < 0 || first + count > slots) {
        throw new RangeError(`getManyWire: expected a slot range within [0, ${slots}), got ${first} + ${count}`);
      }
      if (!Number.isSafeInteger(at) || at < 0 || at + count > out.count) throw new RangeError(`getManyWire: expected room for ${count} numbers from ${at}, got ${out.count}`);
      if (out.width * 8 < bitLength) throw new RangeError(`getManyWire: expected numbers of at least ${Math.ceil(bitLength / 8)} bytes, got ${out.width}`);
      leaveDomain(first, count, (i, slotAt) => {
        // Results lie below 2n: one subtraction of n at most, on the limbs.
        if (!limbsBelow(words, slotAt, nLimbs, limbs)) subtractLimbs(words, slotAt, nLimbs, limbs, limbBits);
        limbsToBytes(words, slotAt, limbs, limbBits, out.bytes, out.offset + (at + i) * out.width, out.width);
      });
    },
    setManyWire(targets: ArrayLike<number>, numbers: WireNumbers, from: number) {
      const count = targets.length;
      if (!Number.isSafeInteger(from) || from < 0 || from + count > numbers.count) {
        throw new RangeError(`setManyWire: expected ${count} numbers from ${from}, got ${numbers.count}`);
      }
      enterDomain('setManyWire', targets, (i, at) => {
        if (!bytesToLimbs(numbers.bytes, numbers.offset + (from + i) * numbers.width, numbers.width, words, at, limbs, limbBits)) {
          throw new RangeError(`setManyWire: expected number ${from + i} to fit ${limbs} limbs`);
        }
        words.fill(0, at + limbs, at + padded);
        if (!limbsBelow(words, at, nLimbs, limbs)) throw new RangeError(`setManyWire: expected number ${from + i} in [0, n), got a value >= n`);
      });
    },
    set(slot: number, x: bigint) {
      checkSlotIndex('set', slot, slots);
      if (typeof x !== 'bigint') throw new TypeError(`set: expected bigint value, got ${typeof x}`);
      if (x < 0n || x >= n) throw new RangeError(`set: expected value in [0, n), got ${x < 0n ? 'a negative value' : 'a value >= n'}`);
      writeValue(slot, (x << shift) % n);
    },
    setMany(targets: ArrayLike<number>, values: readonly bigint[]) {
      if (targets.length !== values.length) throw new RangeError(`setMany: expected as many values as slots, got ${values.length} and ${targets.length}`);
      enterDomain('setMany', targets, (i, at) => {
        const x = values[i]!;
        if (typeof x !== 'bigint') throw new TypeError(`setMany: expected bigint value, got ${typeof x}`);
        if (x < 0n || x >= n) throw new RangeError(`setMany: expected value in [0, n), got ${x < 0n ? 'a negative value' : 'a value >= n'}`);
        words.set(toLimbs(x, limbs, limbBits), at);
        words.fill(0, at + limbs, at + padded);
      });
    },
    get(slot: number) {
      checkSlotIndex('get', slot, slots);
      const at = slotBase + slot * padded;
      return (fromLimbs(words.subarray(at, at + limbs), limbBits) * rInverse) % n;
    },
    setOne(slot: number) {
      checkSlotIndex('setOne', slot, slots);
      writeValue(slot, rModN);
    },
    copy(dst: number, src: number) {
      checkSlotIndex('copy', dst, slots);
      checkSlotIndex('copy', src, slots);
      words.copyWithin(slotBase + dst * padded, slotBase + src * padded, slotBase + (src + 1) * padded);
    },
    multiplyMany(out: Uint32Array, left: Uint32Array, right: Uint32Array, count: number) {
      for (const [name, a] of [['out', out], ['left', left], ['right', right]] as const) {
        if (!(a instanceof Uint32Array)) throw new TypeError(`multiplyMany: expected Uint32Array ${name}, got ${typeof a}`);
      }
      if (!Number.isSafeInteger(count) || count < 0 || count > out.length || count > left.length || count > right.length) {
        throw new RangeError(`multiplyMany: expected integer count in [0, ${Math.min(out.length, left.length, right.length)}], got ${count}`);
      }
      stamp = (stamp + 1) >>> 0;
      if (stamp === 0) {
        stamps.fill(0);
        stamp = 1;
      }
      for (let i = 0; i < count; i++) {
        const o = out[i]!;
        if (o >= slots || left[i]! >= slots || right[i]! >= slots) {
          throw new RangeError(`multiplyMany: expected slot indices below ${slots}, got out ${o}, left ${left[i]}, right ${right[i]} at ${i}`);
        }
        if (stamps[o] === stamp) throw new RangeError(`multiplyMany: expected distinct out slots, got slot ${o} twice (again at ${i})`);
        stamps[o] = stamp;
        owners[o] = i;
      }
      // Plain reads of both operands (no per-product array): this loop runs once per product.
      for (let i = 0; i < count; i++) {
        const l = left[i]!;
        const r = right[i]!;
        if ((stamps[l] === stamp && owners[l] !== i) || (stamps[r] === stamp && owners[r] !== i)) {
          const x = stamps[l] === stamp && owners[l] !== i ? l : r;
          throw new RangeError(`multiplyMany: expected no product to read another's out slot, got slot ${x} read at ${i} and written at ${owners[x]}`);
        }
      }
      for (let start = 0; start < count; start += capacity) {
        const size = Math.min(capacity, count - start);
        words.set(out.subarray(start, start + size), indexBase);
        words.set(left.subarray(start, start + size), indexBase + capacity);
        words.set(right.subarray(start, start + size), indexBase + 2 * capacity);
        const groups = Math.ceil(size / 4);
        // Idle lanes of the last group repeat the first product and write to the scratch slot (-1).
        for (let i = size; i < groups * 4; i++) {
          words[indexBase + i] = 0xffffffff;
          words[indexBase + capacity + i] = left[start]!;
          words[indexBase + 2 * capacity + i] = right[start]!;
        }
        if (scheduleEntries > 0) e.multiplyOnes(groups, limbs, slotBytes, scheduleEntries);
        else e.multiply(groups, limbs, slotBytes);
      }
    },
  };
  return kernel;
}

/** Hex digit values by character code ('0'-'9', 'a'-'f'); BigInt#toString(16) writes lower case. */
const HEX_VALUE = (() => {
  const table = new Uint8Array(128);
  for (let d = 0; d < 16; d++) table['0123456789abcdef'.charCodeAt(d)] = d;
  return table;
})();
const HEX_CODE = Uint8Array.from('0123456789abcdef', (ch) => ch.charCodeAt(0));
const ascii = new TextDecoder();

/**
 * The low `count` little-endian limbs of `bits` bits of x >= 0: its hex digits read from the
 * last, four bits at a time (one pass over the string, no slices: answers convert thousands).
 */
function toLimbs(x: bigint, count: number, bits: number): Uint32Array {
  const hex = x.toString(16);
  const out = new Uint32Array(count);
  const mask = 2 ** bits - 1;
  let buffer = 0; // below 2^(bits + 4)
  let held = 0;
  let j = 0;
  for (let i = hex.length - 1; i >= 0 && j < count; i--) {
    buffer |= HEX_VALUE[hex.charCodeAt(i)]! << held;
    held += 4;
    if (held >= bits) {
      out[j++] = buffer & mask;
      buffer >>>= bits;
      held -= bits;
    }
  }
  if (j < count) out[j] = buffer;
  return out;
}

/** The value of little-endian limbs of `bits` bits each (each below 2^bits), as hex digits written high to low. */
function fromLimbs(limbs: Uint32Array, bits: number): bigint {
  const digits = Math.ceil((limbs.length * bits) / 4);
  const text = new Uint8Array(digits);
  let buffer = 0;
  let held = 0;
  let at = digits;
  for (let j = 0; j < limbs.length; j++) {
    buffer |= limbs[j]! << held;
    held += bits;
    while (held >= 4) {
      text[--at] = HEX_CODE[buffer & 15]!;
      buffer >>>= 4;
      held -= 4;
    }
  }
  if (held > 0) text[--at] = HEX_CODE[buffer & 15]!;
  return BigInt('0x' + ascii.decode(text.subarray(at)));
}

/**
 * Big-endian bytes (width of them from `start`) into `count` little-endian limbs of `bits` bits at
 * words[at..]. Returns false when the number has set bits above the limbs.
 */
function bytesToLimbs(bytes: Uint8Array, start: number, width: number, words: Uint32Array, at: number, count: number, bits: number): boolean {
  const mask = 2 ** bits - 1;
  let buffer = 0; // below 2^(bits + 8)
  let held = 0;
  let j = 0;
  let i = start + width - 1;
  for (; i >= start && j < count; i--) {
    buffer |= bytes[i]! << held;
    held += 8;
    while (held >= bits && j < count) {
      words[at + j++] = buffer & mask;
      buffer >>>= bits;
      held -= bits;
    }
  }
  if (j < count) {
    words[at + j++] = buffer;
    buffer = 0;
    for (; j < count; j++) words[at + j] = 0;
  }
  if (buffer !== 0) return false;
  for (; i >= start; i--) if (bytes[i] !== 0) return false;
  return true;
}

/** Little-endian limbs at words[at..] to big-endian bytes, `width` of them at out[start..] (high bytes zero). */
function limbsToBytes(words: Uint32Array, at: number, count: number, bits: number, out: Uint8Array, start: number, width: number): void {
  let buffer = 0;
  let held = 0;
  let o = start + width - 1;
  for (let j = 0; j < count && o >= start; j++) {
    buffer |= words[at + j]! << held;
    held += bits;
    while (held >= 8 && o >= start) {
      out[o--] = buffer & 0xff;
      buffer >>>= 8;
      held -= 8;
    }
  }
  if (held > 0 && o >= start) out[o--] = buffer & 0xff;
  for (; o >= start; o--) out[o] = 0;
}

/** True when the limbs at words[at..] hold a value below the limbs of `n` (most significant first). */
function limbsBelow(words: Uint32Array, at: number, n: Uint32Array, count: number): boolean {
  for (let j = count - 1; j >= 0; j--) {
    const w = words[at + j]!;
    if (w !== n[j]) return w < n[j]!;
  }
  return false;
}

/** words[at..] -= n, limb by limb with borrow (the value is at least n). */
function subtractLimbs(words: Uint32Array, at: number, n: Uint32Array, count: number, bits: number): void {
  const digit = 2 ** bits;
  let borrow = 0;
  for (let j = 0; j < count; j++) {
    let d = words[at + j]! - n[j]! - borrow;
    borrow = d < 0 ? 1 : 0;
    if (d < 0) d += digit;
    words[at + j] = d;
  }
}
