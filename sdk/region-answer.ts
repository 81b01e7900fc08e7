import { readCandidates, type Candidate } from '../core/geo/candidates.ts';
import type { Manifest } from '../core/geo/manifest.ts';
import { rowReader } from '../core/pir/decode.ts';
import type { PirKeyPair } from '../core/pir/keys.ts';
import type { WireNumbers } from '../core/pir/wire.ts';

/**
 * A region's candidate list from the answer to its column: the rows of its filled slots are
 * decoded (one Legendre symbol each), the padding after them is not, and the rows read are checked
 * for Jacobi symbol +1 (decode.ts). RangeError on a bad row or a slot naming no site.
 */
export function candidatesFromAnswer(
  key: PirKeyPair,
  manifest: Manifest,
  rows: WireNumbers,
  region: { rowStart: number },
): { candidates: Candidate[]; rowsDecoded: number } {
  const reader = rowReader(key, rows);
  const candidates = readCandidates(manifest, (offset) => reader.bit(region.rowStart + offset));
  reader.check();
  return { candidates, rowsDecoded: reader.rowsRead };
}
