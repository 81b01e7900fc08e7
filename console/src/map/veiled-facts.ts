import type { Manifest } from '../../../core/geo/manifest.ts';
import { coarseCellCount } from '../../../core/geo/veiled-layout.ts';

const fmt = new Intl.NumberFormat('en-GB');

/** Degrees as people write them: 12.5° N, 3° W (whole degrees in a veiled box). */
function latText(lat: number): string {
  return lat === 0 ? '0°' : `${Math.abs(lat)}° ${lat > 0 ? 'N' : 'S'}`;
}
function lonText(lon: number): string {
  const wrapped = ((((lon + 180) % 360) + 360) % 360) - 180;
  return wrapped === 0 || wrapped === -180 ? `${Math.abs(wrapped)}°` : `${Math.abs(wrapped)}° ${wrapped > 0 ? 'E' : 'W'}`;
}

/**
 * What a veiled manifest tells anyone who fetches it (core/geo/MANIFEST.md, "What a veiled
 * manifest discloses"): the coarse grid, the padded sizes and the totals. Its regions, their
 * lists and how each coarse cell is split are fetched privately, so the map has no list lengths
 * to show and says so instead of showing zeros.
 */
export function veiledFacts(m: Manifest): Array<[string, string]> {
  const layout = m.layout;
  if (layout.kind !== 'veiled') throw new RangeError(`veiledFacts: expected a veiled layout, got ${layout.kind}`);
  const cells = coarseCellCount(layout);
  const bands = cells - layout.rows * layout.cols;
  const k = m.maxK ?? 1;
  return [
    ['Layout', 'veiled: a public coarse grid; regions inside each cell are fetched privately'],
    ['Coarse grid', `${layout.rows} × ${layout.cols} cells over ${latText(layout.latMin)} to ${latText(layout.latMax)}, ${lonText(layout.lonMin)} to ${lonText(layout.lonMax)}`],
    ['Coarse cells', `${fmt.format(cells)}${bands > 0 ? ` (${bands} of them bands covering the rest of the globe)` : ''}`],
    ['Regions in all', `${fmt.format(layout.regions)} (how many in each cell is not published)`],
    ['Sites', fmt.format(m.siteCount)],
    ['Nearest sites served', `k = ${k}`],
    ['Candidate list', `padded to ${fmt.format(m.record.slotsPerRegion)} slots in every region (the longest list)`],
    ['Cell record', `${fmt.format(layout.partitionBits)} bits per coarse cell`],
    ['Cell matrix', `${fmt.format(m.matrix.rows)} × ${fmt.format(m.matrix.columns)} bits`],
    ...(m.partition ? [['Partition matrix', `${fmt.format(m.partition.rows)} × ${fmt.format(m.partition.columns)} bits`] as [string, string]] : []),
    ['Per lookup', 'two private queries: the coarse cell\'s record, then the region\'s list'],
    ['Not published', 'where regions split, each region\'s list, how many sites each cell holds'],
  ];
}
