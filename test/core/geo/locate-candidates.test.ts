import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { decodeCandidates, nearestCandidates, type Candidate } from '../../../core/geo/candidates.ts';
import { locateRegion } from '../../../core/geo/locate.ts';
import type { Manifest } from '../../../core/geo/manifest.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../../../core/geo/quantise.ts';
import { recordLayout, writeBits } from '../../../core/geo/record.ts';

/** A manifest around a box that crosses the antimeridian (lon 170 east to 190 = -170). */
function manifestFor(siteCount: number, slotsPerRegion: number, regionsPerColumn: number): Manifest {
  const layout = { kind: 'grid' as const, latMin: -20, latMax: 0, lonMin: 170, lonMax: 190, rows: 2, cols: 4 };
  const record = recordLayout(siteCount, slotsPerRegion);
  return {
    format: 'nearveil-manifest',
    maxK: 1,
    formatVersion: 1,
    dataset: 'demo-islands',
    version: 1,
    siteCount,
    contentHash: '0'.repeat(64),
    modulusBits: [2048],
    layout,
    record,
    matrix: { rows: regionsPerColumn * record.regionBits, columns: Math.ceil(9 / regionsPerColumn), regionsPerColumn, ones: 0, plan: { kind: 'plain', products: 0, plainProducts: 0 } },
    siteIds: Array.from({ length: siteCount }, (_, i) => `s${i}`),
  };
}

describe('locateRegion', () => {
  const m = manifestFor(5, 2, 4);

  it('finds cells by floor, the north and east edges in the last cell, across the antimeridian', () => {
    // Cells are 10 deg of latitude by 5 deg of longitude; region = row * 4 + col.
    expect(locateRegion(m, -20, 170).region).toBe(0);
    expect(locateRegion(m, -10, 175).region).toBe(4 + 1);
    expect(locateRegion(m, -15, 180).region).toBe(2);
    expect(locateRegion(m, -15, -180).region).toBe(2);
    expect(locateRegion(m, -15, -172.5).region).toBe(3);
    expect(locateRegion(m, 0, -170).region).toBe(7);
    expect(locateRegion(m, -15, -169.99).region).toBe(8);
    expect(locateRegion(m, 0.001, 175).region).toBe(8);
    expect(locateRegion(m, 45, 0).region).toBe(8);
  });

  it('places region i at column floor(i / regionsPerColumn), rows (i mod regionsPerColumn) * regionBits', () => {
    const at = locateRegion(m, -10, -175); // row 1, col 3: region 7
    expect(at).toEqual({ region: 7, column: 1, rowStart: 3 * m.record.regionBits, rowCount: m.record.regionBits });
  });

  it('refuses positions out of range with RangeError', () => {
    expect(() => locateRegion(m, 91, 0)).toThrow(/locateRegion: expected lat in \[-90, 90\], got 91/);
    expect(() => locateRegion(m, 0, -180.5)).toThrow(RangeError);
    expect(() => locateRegion(m, Number.NaN, 0)).toThrow(RangeError);
  });
});

describe('decodeCandidates and nearestCandidates', () => {
  it('read back what the slot layout wrote, skipping empty slots', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 70_000 }),
        fc.array(fc.tuple(fc.double({ min: -90, max: 90, noNaN: true }), fc.double({ min: -180, max: 180, noNaN: true })), { maxLength: 6 }),
        fc.integer({ min: 0, max: 3 }),
        (siteCount, coords, spare) => {
          const m = manifestFor(siteCount, coords.length + spare || 1, 1);
          const r = m.record;
          const bits = new Uint8Array(r.regionBits);
          const put = (offset: number, bit: 0 | 1) => (bits[offset] = bit);
          const expected: Candidate[] = coords.map(([lat, lon], k) => {
            const index = (k * 7919) % siteCount;
            writeBits(put, k * r.slotBits, r.indexBits, index + 1); // stored as index + 1
            writeBits(put, k * r.slotBits + r.indexBits, 24, quantiseLat(lat));
            writeBits(put, k * r.slotBits + r.indexBits + 24, 25, quantiseLon(lon));
            return { index, lat: dequantiseLat(quantiseLat(lat)), lon: dequantiseLon(quantiseLon(lon)) };
          });
          // Padding slots stay all zeros: stored index 0 is an empty slot.
          expect(decodeCandidates(m, bits)).toEqual(expected);
        },
      ),
      { seed: 20261203 },
    );
  });

  it('refuses a wrong length or an index past the table', () => {
    const m = manifestFor(5, 2, 1);
    expect(() => decodeCandidates(m, new Uint8Array(3))).toThrow(/expected 104 bits, got 3/);
    const bits = new Uint8Array(m.record.regionBits);
    writeBits((o, b) => (bits[o] = b), 0, m.record.indexBits, 7); // stored index + 1
    expect(() => decodeCandidates(m, bits)).toThrow(/expected a site index below 5, got 6/);
  });

  it('sorts by distance, equal distances by index', () => {
    const c: Candidate[] = [
      { index: 4, lat: 0, lon: 1 },
      { index: 2, lat: 0, lon: -1 },
      { index: 9, lat: 0, lon: 0.5 },
    ];
    expect(nearestCandidates(c, 0, 0, 3).map((x) => x.index)).toEqual([9, 2, 4]);
    expect(nearestCandidates(c, 0, 0)).toHaveLength(1);
    expect(nearestCandidates(c, 0, 0)[0]!.distanceMeters).toBeCloseTo((6371008.8 * Math.PI) / 360, 3);
    expect(() => nearestCandidates(c, 0, 0, 0)).toThrow(RangeError);
  });
});
