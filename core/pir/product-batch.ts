import type { ProductEngine } from './product-engine.ts';

/** Scratch index arrays for multiplyMany, grown on demand. */
export class Batch {
  out = new Uint32Array(64);
  left = new Uint32Array(64);
  right = new Uint32Array(64);
  count = 0;
  push(out: number, left: number, right: number): void {
    if (this.count === this.out.length) {
      const grow = (a: Uint32Array) => {
        const b = new Uint32Array(a.length * 2);
        b.set(a);
        return b;
      };
      this.out = grow(this.out);
      this.left = grow(this.left);
      this.right = grow(this.right);
    }
    this.out[this.count] = out;
    this.left[this.count] = left;
    this.right[this.count] = right;
    this.count++;
  }
  run(engine: ProductEngine): number {
    const done = this.count;
    if (done > 0) engine.multiplyMany(this.out, this.left, this.right, done);
    this.count = 0;
    return done;
  }
}

