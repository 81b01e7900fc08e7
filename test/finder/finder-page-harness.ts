import { join } from 'node:path';
import { build } from 'vite';
import { ROOT } from '../product-server.ts';

/** Where `npx vite build --config finder/vite.config.ts` writes the page's script and stylesheet. */
export const FINDER_BUILD = join(ROOT, '.console-build', 'finder');

/** Builds the finder page's files as the product build does (finder/vite.config.ts). */
export async function buildFinder(): Promise<void> {
  await build({ configFile: join(ROOT, 'finder', 'vite.config.ts'), logLevel: 'warn' });
}

/** Great-circle distance by the haversine formula (common practice), on a sphere of 6371 km: the test's own reference. */
export function haversineMeters(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const rad = Math.PI / 180;
  const a = Math.sin(((lat2 - lat1) * rad) / 2) ** 2 + Math.cos(lat1 * rad) * Math.cos(lat2 * rad) * Math.sin(((lon2 - lon1) * rad) / 2) ** 2;
  return 2 * 6_371_000 * Math.asin(Math.min(1, Math.sqrt(a)));
}

/** The ids of the k sites nearest to a point, by brute force over every site. */
export function bruteForceNearest(sites: ReadonlyArray<{ id: string; lat: number; lon: number }>, lat: number, lon: number, k: number): string[] {
  return sites
    .map((s) => ({ id: s.id, d: haversineMeters(lat, lon, s.lat, s.lon) }))
    .sort((a, b) => a.d - b.d)
    .slice(0, k)
    .map((s) => s.id);
}

/**
 * The byte patterns a position could travel as: decimal text at 2 to 7 places and as JavaScript
 * prints it, and IEEE 754 binary64 and binary32 in both byte orders.
 */
export function positionPatterns(value: number): Array<{ label: string; bytes: Buffer }> {
  const texts = new Set([String(value), ...[2, 3, 4, 5, 6, 7].map((places) => value.toFixed(places))]);
  const out = [...texts].map((text) => ({ label: `text ${text}`, bytes: Buffer.from(text) }));
  const f64 = Buffer.alloc(8);
  f64.writeDoubleBE(value);
  out.push({ label: 'float64 BE', bytes: Buffer.from(f64) });
  f64.writeDoubleLE(value);
  out.push({ label: 'float64 LE', bytes: Buffer.from(f64) });
  const f32 = Buffer.alloc(4);
  f32.writeFloatBE(value);
  out.push({ label: 'float32 BE', bytes: Buffer.from(f32) });
  f32.writeFloatLE(value);
  out.push({ label: 'float32 LE', bytes: Buffer.from(f32) });
  return out;
}
