import { describe, expect, it } from 'vitest';
import { ManifestSchema } from '../../../core/geo/manifest.ts';

const good = {
  format: 'nearveil-manifest',
  formatVersion: 1,
  dataset: 'demo-shelters',
  version: 2,
  siteCount: 3,
  contentHash: 'ab'.repeat(32),
  modulusBits: [2048, 3072],
  layout: { kind: 'grid', latMin: 10, latMax: 11, lonMin: 179, lonMax: 181, rows: 1, cols: 2 },
  maxK: 3,
  record: { indexBits: 2, latBits: 24, lonBits: 25, slotBits: 51, slotsPerRegion: 3, regionBits: 153 },
  matrix: { rows: 153, columns: 3, regionsPerColumn: 1, ones: 100, plan: { kind: 'blocked', blockColumns: 2, products: 350, plainProducts: 403 } },
  siteIds: ['a', 'b', 'c'],
};

describe('ManifestSchema', () => {
  it('accepts a consistent manifest', () => {
    expect(ManifestSchema.parse(good)).toEqual(good);
  });

  it('reads a manifest written before k nearest as built for k = 1', () => {
    const { maxK: _, ...older } = good;
    expect(ManifestSchema.parse(older).maxK).toBe(1);
  });

  it.each([
    ['an unknown modulus size', { modulusBits: [1024] }],
    ['too few index bits for the empty-slot value', { siteCount: 4, siteIds: ['a', 'b', 'c', 'd'] }],
    ['a site id list of the wrong length', { siteIds: ['a'] }],
    ['slotBits that do not add up', { record: { ...good.record, slotBits: 52 } }],
    ['matrix rows that do not match the packing', { matrix: { ...good.matrix, rows: 152 } }],
    ['too few matrix columns for the regions', { matrix: { ...good.matrix, columns: 2 } }],
    ['a box wider than the globe', { layout: { ...good.layout, lonMax: 540 } }],
    ['k nearest beyond 8', { maxK: 9 }],
    ['k nearest of 0', { maxK: 0 }],
    ['an upper-case hash', { contentHash: 'AB'.repeat(32) }],
    ['another format', { format: 'other' }],
  ])('refuses %s', (_, change) => {
    expect(ManifestSchema.safeParse({ ...good, ...change }).success).toBe(false);
  });
});
