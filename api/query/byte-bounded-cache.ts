/**
 * A least-recently-used map bounded by bytes rather than entries: an isolate keeps the matrices
 * it answers from without holding more than `budgetBytes` of them (the most recent entry stays
 * even when it alone is larger, since the answer in progress needs it).
 */
export class ByteBoundedCache<V> {
  private readonly entries = new Map<string, { value: V; bytes: number }>();
  private held = 0;

  constructor(
    private readonly budgetBytes: number,
    private readonly sizeOf: (value: V) => number,
  ) {}

  get(key: string): V | undefined {
    const hit = this.entries.get(key);
    if (!hit) return undefined;
    // Map keeps insertion order: re-inserting makes this key the most recently used.
    this.entries.delete(key);
    this.entries.set(key, hit);
    return hit.value;
  }

  set(key: string, value: V): void {
    const old = this.entries.get(key);
    if (old) {
      this.entries.delete(key);
      this.held -= old.bytes;
    }
    const bytes = this.sizeOf(value);
    this.entries.set(key, { value, bytes });
    this.held += bytes;
    for (const [oldest, entry] of this.entries) {
      if (this.held <= this.budgetBytes || oldest === key) break;
      this.entries.delete(oldest);
      this.held -= entry.bytes;
    }
  }

  get bytes(): number {
    return this.held;
  }

  get size(): number {
    return this.entries.size;
  }
}
