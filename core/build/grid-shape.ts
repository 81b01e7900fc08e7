import { EARTH_MEAN_RADIUS_M, RAD } from '../geo/distance.ts';
import type { LatLonBox } from '../geo/bounding-box.ts';

/**
 * rows x cols with about `cells` cells whose shape follows the box in metres (cells roughly
 * square on the ground). The box width is measured along its widest parallel, the one nearest
 * the equator. Always at least 1 x 1.
 */
export function gridShape(box: LatLonBox, cells: number): { rows: number; cols: number } {
  const height = EARTH_MEAN_RADIUS_M * (box.latMax - box.latMin) * RAD;
  const widest = box.latMin <= 0 && box.latMax >= 0 ? 0 : Math.min(Math.abs(box.latMin), Math.abs(box.latMax));
  const width = EARTH_MEAN_RADIUS_M * (box.lonMax - box.lonMin) * RAD * Math.cos(widest * RAD);
  const aspect = Math.max(1e-6, width) / Math.max(1e-6, height);
  const rows = Math.max(1, Math.round(Math.sqrt(Math.max(1, cells) / aspect)));
  const cols = Math.max(1, Math.round(Math.max(1, cells) / rows));
  return { rows, cols };
}
