/**
 * GeoJSON (RFC 7946) in and out of the site sheet. A site is a Feature with a Point geometry;
 * positions are [longitude, latitude] in that order (RFC 7946 section 3.1.1). The site id is
 * the Feature's "id" member (section 3.2) or else its "id" property; every other property
 * becomes a column.
 */
export interface SheetData {
  columns: string[];
  rows: string[][];
}

export class GeoJsonError extends Error {
  constructor(readonly where: string, message: string) {
    super(`${where}: ${message}`);
    this.name = 'GeoJsonError';
  }
}

export function geoJsonToSheet(text: string): SheetData {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch {
    throw new GeoJsonError('file', 'expected JSON text, got something else');
  }
  const obj = doc as { type?: unknown; features?: unknown };
  const features = obj?.type === 'FeatureCollection' ? obj.features : obj?.type === 'Feature' ? [doc] : null;
  if (!Array.isArray(features)) throw new GeoJsonError('type', `expected a FeatureCollection or a Feature, got ${JSON.stringify(obj?.type ?? null)}`);
  const columns = ['id', 'name', 'lat', 'lon'];
  const seen = new Set(columns);
  const rows: Record<string, string>[] = [];
  features.forEach((f, i) => {
    const where = `features[${i}]`;
    const feature = f as { type?: unknown; id?: unknown; geometry?: { type?: unknown; coordinates?: unknown } | null; properties?: Record<string, unknown> | null };
    if (feature?.type !== 'Feature') throw new GeoJsonError(where, 'expected a Feature');
    const geometry = feature.geometry;
    if (!geometry || geometry.type !== 'Point' || !Array.isArray(geometry.coordinates) || geometry.coordinates.length < 2) {
      throw new GeoJsonError(`${where}.geometry`, `expected a Point with [longitude, latitude], got ${JSON.stringify(geometry?.type ?? null)}`);
    }
    const [lon, lat] = geometry.coordinates as unknown[];
    if (typeof lon !== 'number' || typeof lat !== 'number') throw new GeoJsonError(`${where}.geometry.coordinates`, 'expected two numbers');
    const props = feature.properties ?? {};
    const row: Record<string, string> = {};
    for (const [key, value] of Object.entries(props)) {
      const name = key.trim();
      if (name === '' || ['lat', 'lon'].includes(name.toLowerCase())) continue;
      const column = columns.find((c) => c.toLowerCase() === name.toLowerCase()) ?? name;
      if (!seen.has(column)) {
        seen.add(column);
        columns.push(column);
      }
      row[column] = value === null || value === undefined ? '' : typeof value === 'object' ? JSON.stringify(value) : String(value);
    }
    if (feature.id !== undefined && feature.id !== null) row.id = String(feature.id);
    row.lat = String(lat);
    row.lon = String(lon);
    rows.push(row);
  });
  return { columns, rows: rows.map((r) => columns.map((c) => r[c] ?? '')) };
}

/** The sheet as a FeatureCollection; rows without numeric coordinates are left out and counted. */
export function sheetToGeoJson(columns: readonly string[], rows: readonly (readonly string[])[]): { text: string; skipped: number } {
  const at = (name: string) => columns.findIndex((c) => c.trim().toLowerCase() === name);
  const idAt = at('id');
  const latAt = at('lat');
  const lonAt = at('lon');
  let skipped = 0;
  const features = [];
  for (const row of rows) {
    const lat = Number(row[latAt]);
    const lon = Number(row[lonAt]);
    if (latAt < 0 || lonAt < 0 || row[latAt]?.trim() === '' || row[lonAt]?.trim() === '' || !Number.isFinite(lat) || !Number.isFinite(lon)) {
      skipped++;
      continue;
    }
    const properties: Record<string, string> = {};
    columns.forEach((c, i) => {
      if (i !== latAt && i !== lonAt && i !== idAt) properties[c] = row[i] ?? '';
    });
    features.push({ type: 'Feature', ...(idAt >= 0 ? { id: row[idAt] } : {}), geometry: { type: 'Point', coordinates: [lon, lat] }, properties });
  }
  return { text: JSON.stringify({ type: 'FeatureCollection', features }, null, 1), skipped };
}
