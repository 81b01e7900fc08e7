import { Geodesic } from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import { shapeCost } from '../../core/build/cost-model.ts';
import { buildVersion } from '../../core/build/build-version.ts';
import { greatCircleMeters } from '../../core/geo/distance.ts';
import { parseSiteTable } from '../../core/geo/site-table.ts';
import { queryCost } from '../../console/src/cost/query-cost.ts';
import { geoJsonToSheet, GeoJsonError, sheetToGeoJson } from '../../console/src/io/geojson.ts';
import { azimuthalEquidistant, chooseProjection, equirectangular } from '../../console/src/map/projection.ts';
import { diffTables } from '../../console/src/versions/table-diff.ts';

describe('GeoJSON in and out (RFC 7946)', () => {
  it('reads the worked Feature example of RFC 7946 section 1.5 with [longitude, latitude] order', () => {
    // RFC 7946 section 1.5 example, Point feature: coordinates [102.0, 0.5], property prop0 "value0".
    const doc = { type: 'FeatureCollection', features: [{ type: 'Feature', geometry: { type: 'Point', coordinates: [102.0, 0.5] }, properties: { prop0: 'value0' } }] };
    const sheet = geoJsonToSheet(JSON.stringify(doc));
    expect(sheet.columns).toEqual(['id', 'name', 'lat', 'lon', 'prop0']);
    expect(sheet.rows).toEqual([['', '', '0.5', '102', 'value0']]);
  });

  it('round-trips a sheet, with the Feature id as the site id', () => {
    const columns = ['id', 'name', 'lat', 'lon', 'phone'];
    const rows = [['q1', 'Orrin Ford', '45.5', '-111.25', '0100'], ['q2', 'Hollin', 'x', '1', '']];
    const { text, skipped } = sheetToGeoJson(columns, rows);
    expect(skipped).toBe(1);
    const parsed = JSON.parse(text);
    expect(parsed.features[0]).toEqual({ type: 'Feature', id: 'q1', geometry: { type: 'Point', coordinates: [-111.25, 45.5] }, properties: { name: 'Orrin Ford', phone: '0100' } });
    expect(geoJsonToSheet(text)).toEqual({ columns, rows: [rows[0]] });
  });

  it('refuses what is not a Point FeatureCollection, naming where', () => {
    expect(() => geoJsonToSheet('{"type":"Polygon"}')).toThrow(GeoJsonError);
    expect(() => geoJsonToSheet('{"type":"FeatureCollection","features":[{"type":"Feature","geometry":{"type":"LineString","coordinates":[]}}]}')).toThrow(/features\[0\]\.geometry/);
    expect(() => geoJsonToSheet('not json')).toThrow(/expected JSON/);
  });
});

describe('diff of two site tables', () => {
  it('lists added, removed and changed rows cell by cell, ignoring column order', () => {
    const before = { columns: ['id', 'name', 'lat', 'lon'], rows: [['a', 'A', '1', '2'], ['b', 'B', '1', '2'], ['c', 'C', '1', '2']] };
    const after = { columns: ['lon', 'lat', 'name', 'id', 'phone'], rows: [['2', '1', 'A', 'a', ''], ['2', '1.5', 'B', 'b', '01'], ['0', '0', 'D', 'd', '']] };
    const d = diffTables(before, after);
    expect(d.columnsAdded).toEqual(['phone']);
    expect(d.added.map((r) => r.id)).toEqual(['d']);
    expect(d.removed.map((r) => r.id)).toEqual(['c']);
    expect(d.changed).toEqual([{ id: 'b', cells: [{ column: 'lat', before: '1', after: '1.5' }, { column: 'phone', before: '', after: '01' }] }]);
    expect(d.unchanged).toBe(1);
  });
});

describe('map projections', () => {
  it('azimuthal equidistant: distance from the centre is the great-circle distance (checked with geographiclib on a sphere)', () => {
    const R = 6371008.8;
    const sphere = new Geodesic.Geodesic(R, 0); // GeographicLib on a sphere of the same radius (npm geographiclib-geodesic)
    const p = azimuthalEquidistant(78, 15);
    for (const [lat, lon] of [[78.2, 15.6], [60, -40], [-30, 100], [89.9, 179]] as const) {
      const [x, y] = p.forward(lat, lon);
      const s12 = sphere.Inverse(78, 15, lat, lon).s12!;
      expect(Math.hypot(x, y)).toBeCloseTo(s12, 0);
      expect(Math.abs(greatCircleMeters(78, 15, lat, lon) - s12)).toBeLessThan(1e-3);
      const back = p.inverse(x, y)!;
      expect(back[0]).toBeCloseTo(lat, 8);
      expect(((back[1] - lon + 540) % 360) - 180).toBeCloseTo(0, 8);
    }
  });

  it('chooses equirectangular for a regional table (also across the antimeridian) and azimuthal for polar ones', () => {
    const regional = chooseProjection([45, 46], [-112, -110]);
    expect(regional.name).toMatch(/^equirectangular/);
    expect(regional.lat0).toBeCloseTo(45.5, 9);
    const fiji = chooseProjection([-18, -16], [178, -179]);
    expect(fiji.name).toMatch(/^equirectangular/);
    expect(Math.abs(fiji.lon0)).toBeGreaterThan(179);
    // Across the seam, neighbours stay neighbours: 2 degrees of longitude, not 358.
    const [xa] = fiji.forward(-17, 179);
    const [xb] = fiji.forward(-17, -179);
    expect(Math.abs(xb - xa)).toBeCloseTo(2 * Math.cos((17 * Math.PI) / 180) * R1DEG, -2);
    expect(chooseProjection([70, 85], [0, 60]).name).toMatch(/^azimuthal/);
    const e = equirectangular(45, 0);
    const [x, y] = e.forward(45.5, 1);
    expect(e.inverse(x, y)!.map((v) => Number(v.toFixed(9)))).toEqual([45.5, 1]);
  });
});
const R1DEG = (6371008.8 * Math.PI) / 180;

describe('cost of one query from a manifest', () => {
  it('agrees with the build cost model and counts one column per query', async () => {
    const csv = 'id,lat,lon\n' + Array.from({ length: 40 }, (_, i) => `s${i},${45 + (i % 7) * 0.05},${-111 + Math.floor(i / 7) * 0.07}`).join('\n');
    const { manifest } = await buildVersion(parseSiteTable(csv), { dataset: 'demo', version: 1 });
    const cost = queryCost(manifest);
    const model = shapeCost(manifest.matrix.rows, manifest.matrix.columns, 0, 0);
    expect(cost.bytes[0]).toEqual({ modulusBits: 2048, up: model.bytesUp, down: model.bytesDown });
    expect(cost.bytes[1]!.modulusBits).toBe(3072);
    expect(cost.bytes[1]!.up).toBe(10 + 384 * (manifest.matrix.columns + 1));
    expect(cost.queriesForWholeMatrix).toBe(manifest.matrix.columns);
    expect(cost.products).toBe(manifest.matrix.plan.products + 2 * manifest.matrix.rows);
    expect(cost.billedProducts).toBe(manifest.matrix.plan.products);
  });
});
