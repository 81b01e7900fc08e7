/**
 * The uniform grid layout: a latitude/longitude box split into rows x cols cells, plus one more
 * region, "outside", for every point not in the box.
 *
 * Invariants (checked by ManifestSchema, relied on here):
 *   -90 <= latMin < latMax <= 90;  -180 <= lonMin < 180;  lonMin < lonMax <= lonMin + 360.
 *   lonMax may exceed 180 so a box can cross the antimeridian; lonMax - lonMin = 360 is the whole
 *   circle. A longitude is read as its offset east of lonMin, taken modulo 360.
 *   Cell (row, col) is region row * cols + col, rows counted from latMin northward and cols from
 *   lonMin eastward; region rows * cols is "outside".
 *   A point belongs to the cell found by flooring its fractional position; a point on the north
 *   or east edge of the box belongs to the last row or column. Candidate lists are built for
 *   closed cells, so any consistent rounding at an edge is sound.
 */
export interface GridLayout {
  readonly kind: 'grid';
  readonly latMin: number;
  readonly latMax: number;
  readonly lonMin: number;
  readonly lonMax: number;
  readonly rows: number;
  readonly cols: number;
}

/** Latitude of parallel i (0 .. rows). */
export function latEdge(g: GridLayout, i: number): number {
  return i === g.rows ? g.latMax : g.latMin + ((g.latMax - g.latMin) * i) / g.rows;
}

/** Longitude of meridian j (0 .. cols), possibly above 180 for boxes across the antimeridian. */
export function lonEdge(g: GridLayout, j: number): number {
  return j === g.cols ? g.lonMax : g.lonMin + ((g.lonMax - g.lonMin) * j) / g.cols;
}

/** True when the box wraps the whole circle of longitude. */
export function isFullCircle(g: GridLayout): boolean {
  return g.lonMax - g.lonMin >= 360;
}

/** Region of a point (degrees, lat in [-90, 90]); rows * cols means outside. No range checks. */
export function gridRegion(g: GridLayout, lat: number, lon: number): number {
  const outside = g.rows * g.cols;
  if (lat < g.latMin || lat > g.latMax) return outside;
  const span = g.lonMax - g.lonMin;
  const offset = (((lon - g.lonMin) % 360) + 360) % 360;
  if (offset > span) return outside;
  const row = Math.min(g.rows - 1, Math.floor(((lat - g.latMin) / (g.latMax - g.latMin)) * g.rows));
  const col = Math.min(g.cols - 1, Math.floor((offset / span) * g.cols));
  return row * g.cols + col;
}
