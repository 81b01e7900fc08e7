import { greatCircleMeters } from './distance.ts';
import type { Manifest } from './manifest.ts';
import { dequantiseLat, dequantiseLon } from './quantise.ts';

/** One filled slot of a candidate list: site index and its (dequantised) coordinates. */
export interface Candidate {
  index: number;
  lat: number;
  lon: number;
}

/**
 * Decodes a region's candidate list from its bits (one 0/1 byte per matrix row of the region,
 * `manifest.record.regionBits` of them; see record.ts for the slot layout). Throws RangeError on
 * a wrong length or a slot naming a site that does not exist (a corrupted or mismatched answer),
 * rather than return a wrong list.
 */
export function decodeCandidates(manifest: Manifest, regionBits: Uint8Array): Candidate[] {
  const r = manifest.record;
  if (!(regionBits instanceof Uint8Array) || regionBits.length !== r.regionBits) {
    throw new RangeError(`decodeCandidates: expected ${r.regionBits} bits, got ${regionBits?.length}`);
  }
  return readCandidates(manifest, (offset) => regionBits[offset]! & 1);
}

/**
 * Reads a region's candidate list bit by bit through `bitAt(offset)` (offset into the region's
 * bits), slot by slot, and stops at the first empty slot: filled slots come first (record.ts,
 * fill-matrix.ts), so the padding, most of a list, is never asked for. A client decoding its
 * answer pays one Legendre symbol per bit asked. Same errors as decodeCandidates.
 */
export function readCandidates(manifest: Manifest, bitAt: (offset: number) => number): Candidate[] {
  const r = manifest.record;
  const bits = (offset: number, count: number) => {
    let value = 0;
    for (let b = 0; b < count; b++) value = value * 2 + bitAt(offset + b);
    return value;
  };
  const out: Candidate[] = [];
  for (let s = 0; s < r.slotsPerRegion; s++) {
    const at = s * r.slotBits;
    const stored = bits(at, r.indexBits);
    if (stored === 0) break; // the first empty slot: the rest are padding
    const index = stored - 1;
    if (index >= manifest.siteCount) {
      throw new RangeError(`decodeCandidates: expected a site index below ${manifest.siteCount}, got ${index} in slot ${s}`);
    }
    const lat = dequantiseLat(bits(at + r.indexBits, r.latBits));
    const lon = dequantiseLon(bits(at + r.indexBits + r.latBits, r.lonBits));
    out.push({ index, lat, lon });
  }
  return out;
}

/**
 * The k nearest candidates to (lat, lon) by great-circle distance, nearest first; equal
 * distances are ordered by site index, so the answer is deterministic. k must be a positive
 * integer (RangeError otherwise); fewer come back when the list is shorter.
 */
export function nearestCandidates(
  candidates: readonly Candidate[],
  lat: number,
  lon: number,
  k = 1,
): Array<Candidate & { distanceMeters: number }> {
  if (!Number.isSafeInteger(k) || k < 1) throw new RangeError(`nearestCandidates: expected k >= 1, got ${k}`);
  return candidates
    .map((c) => ({ ...c, distanceMeters: greatCircleMeters(lat, lon, c.lat, c.lon) }))
    .sort((a, b) => a.distanceMeters - b.distanceMeters || a.index - b.index)
    .slice(0, k);
}
