import { kdCandidateLists } from '../../../core/geo/kd-regions.ts';
import type { Manifest } from '../../../core/geo/manifest.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../../../core/geo/quantise.ts';
import { gridCandidateLists } from '../../../core/geo/region-lists.ts';
import { parseSiteTable } from '../../../core/geo/site-table.ts';
import { buildSitePoints } from '../../../core/geo/site-points.ts';

/** What the map draws and answers clicks from: the admin's own sites and every region's list. */
export interface MapData {
  ids: string[];
  names: (string | null)[];
  /** Coordinates as typed in the table. */
  lats: Float64Array;
  lons: Float64Array;
  /** Coordinates as the build stores them (quantised to about 1.2 m), as a client decodes them. */
  qlats: Float64Array;
  qlons: Float64Array;
  lists: Int32Array[];
  ms: number;
}

/**
 * Rebuilds every region's candidate list from a version's site table and its manifest's layout,
 * exactly as the build did (quantised coordinates, the same list code). Runs in a Worker.
 */
export function computeMapData(csv: string, manifest: Manifest): MapData {
  const started = performance.now();
  const { sites } = parseSiteTable(csv);
  const qlats = Float64Array.from(sites, (s) => dequantiseLat(quantiseLat(s.lat)));
  const qlons = Float64Array.from(sites, (s) => dequantiseLon(quantiseLon(s.lon)));
  const points = buildSitePoints(qlats, qlons);
  const layout = manifest.layout;
  // A veiled layout's regions are not public: no lists to rebuild here (the map shows its coarse grid).
  const lists = layout.kind === 'grid' ? gridCandidateLists(points, layout) : layout.kind === 'kd' ? kdCandidateLists(points, layout) : [];
  return {
    ids: sites.map((s) => s.id),
    names: sites.map((s) => s.name),
    lats: Float64Array.from(sites, (s) => s.lat),
    lons: Float64Array.from(sites, (s) => s.lon),
    qlats,
    qlons,
    lists,
    ms: performance.now() - started,
  };
}
