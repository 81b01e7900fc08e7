import { describe, expect, it } from 'vitest';
import { ByteBoundedCache } from '../../api/query/byte-bounded-cache.ts';

describe('ByteBoundedCache', () => {
  it('evicts the least recently used entries once the bytes exceed the budget', () => {
    const cache = new ByteBoundedCache<Uint8Array>(100, (v) => v.byteLength);
    cache.set('a', new Uint8Array(40));
    cache.set('b', new Uint8Array(40));
    expect(cache.get('a')?.byteLength).toBe(40); // a is now the most recent
    cache.set('c', new Uint8Array(40)); // 120 bytes: b goes, not a
    expect(cache.get('b')).toBeUndefined();
    expect(cache.get('a')).toBeDefined();
    expect(cache.get('c')).toBeDefined();
    expect(cache.bytes).toBe(80);
  });

  it('keeps the newest entry even when it alone is over the budget', () => {
    const cache = new ByteBoundedCache<Uint8Array>(100, (v) => v.byteLength);
    cache.set('a', new Uint8Array(30));
    cache.set('big', new Uint8Array(150));
    expect(cache.size).toBe(1);
    expect(cache.get('big')?.byteLength).toBe(150);
    expect(cache.bytes).toBe(150);
  });

  it('replacing a key counts its bytes once', () => {
    const cache = new ByteBoundedCache<Uint8Array>(100, (v) => v.byteLength);
    cache.set('a', new Uint8Array(60));
    cache.set('a', new Uint8Array(70));
    expect(cache.bytes).toBe(70);
    expect(cache.size).toBe(1);
  });
});
