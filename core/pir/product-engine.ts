import { bigintToBytes, bytesToBigint } from '../bigint/bytes.ts';
import { randomBelow } from '../bigint/random.ts';
import { wireNumberAt, type WireNumbers } from './wire.ts';

/**
 * Where the answer's modular products happen. Values live in numbered slots (in whatever form
 * the engine likes, e.g. Montgomery form); many independent products are asked for at once so
 * an engine can run several in parallel lanes. The BigInt engine below is the plain reference;
 * core/montgomery provides a WebAssembly SIMD one with the same shape.
 */
export interface ProductEngine {
  readonly modulus: bigint;
  readonly slots: number;
  ensureSlots(count: number): void;
  /** Stores x in [0, n) in slot s. */
  set(slot: number, x: bigint): void;
  /** Stores values[i] (each in [0, n)) in slots[i]; engines may convert many at once. Slots distinct. */
  setMany(slots: ArrayLike<number>, values: readonly bigint[]): void;
  /** Reads slot s as an ordinary residue in [0, n). */
  get(slot: number): bigint;
  setOne(slot: number): void;
  copy(dst: number, src: number): void;
  /** Puts a uniform random non-zero residue in slot s (the blinding factors). */
  setRandomNonZero(slot: number): void;
  /** Reads slots [first, first + count) as residues in [0, n). */
  getMany(first: number, count: number): bigint[];
  /**
   * Stores numbers[from + i] (big-endian wire bytes, each a value in [0, n)) in targets[i], with
   * no BigInt made: the server's path from a query body into the engine.
   */
  setManyWire(targets: ArrayLike<number>, numbers: WireNumbers, from: number): void;
  /** Writes slots [first, first + count) as residues in [0, n) into out's numbers at, at + 1, ... */
  getManyWire(first: number, count: number, out: WireNumbers, at: number): void;
  /**
   * out[i] = left[i] * right[i] mod n for i < count. Out slots are distinct, and an out slot may
   * be read only by its own product (out[i] = left[i] updates in place).
   */
  multiplyMany(out: Uint32Array, left: Uint32Array, right: Uint32Array, count: number): void;
}

/** Plain BigInt `(a * b) % n` in slots: the reference every faster engine is checked against. */
export function createBigIntEngine(n: bigint): ProductEngine {
  if (typeof n !== 'bigint' || n < 3n || (n & 1n) === 0n) throw new RangeError(`createBigIntEngine: expected odd modulus >= 3, got ${n}`);
  let store: bigint[] = [];
  const check = (fn: string, slot: number) => {
    if (!Number.isSafeInteger(slot) || slot < 0 || slot >= store.length) {
      throw new RangeError(`${fn}: expected slot in [0, ${store.length}), got ${slot}`);
    }
  };
  return {
    modulus: n,
    get slots() {
      return store.length;
    },
    ensureSlots(count) {
      if (count > store.length) store = store.concat(new Array<bigint>(count - store.length).fill(0n));
    },
    set(slot, x) {
      check('set', slot);
      if (x < 0n || x >= n) throw new RangeError(`set: expected 0 <= x < n, got ${x < 0n ? x : 'x >= n'}`);
      store[slot] = x;
    },
    get(slot) {
      check('get', slot);
      return store[slot]!;
    },
    setMany(slots, values) {
      if (slots.length !== values.length) throw new RangeError(`setMany: expected as many values as slots, got ${values.length} and ${slots.length}`);
      for (let i = 0; i < values.length; i++) this.set(slots[i]!, values[i]!);
    },
    setOne(slot) {
      check('setOne', slot);
      store[slot] = 1n;
    },
    copy(dst, src) {
      check('copy', dst);
      check('copy', src);
      store[dst] = store[src]!;
    },
    setRandomNonZero(slot) {
      check('setRandomNonZero', slot);
      let s = 0n;
      while (s === 0n) s = randomBelow(n);
      store[slot] = s;
    },
    getMany(first, count) {
      if (count > 0) check('getMany', first + count - 1);
      return store.slice(first, first + count);
    },
    setManyWire(targets, numbers, from) {
      for (let i = 0; i < targets.length; i++) this.set(targets[i]!, bytesToBigint(wireNumberAt(numbers, from + i)));
    },
    getManyWire(first, count, out, at) {
      for (let i = 0; i < count; i++) {
        check('getManyWire', first + i);
        out.bytes.set(bigintToBytes(store[first + i]!, out.width), out.offset + (at + i) * out.width);
      }
    },
    multiplyMany(out, left, right, count) {
      for (let i = 0; i < count; i++) store[out[i]!] = (store[left[i]!]! * store[right[i]!]!) % n;
    },
  };
}
