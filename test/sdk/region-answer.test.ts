import { beforeAll, describe, expect, it } from 'vitest';
import { buildVersion, type BuildResult } from '../../core/build/build-version.ts';
import { decodeCandidates } from '../../core/geo/candidates.ts';
import { locateRegion } from '../../core/geo/locate.ts';
import { answerQuery } from '../../core/pir/answer.ts';
import { decodeRows } from '../../core/pir/decode.ts';
import { generateKeyPair, type PirKeyPair } from '../../core/pir/keys.ts';
import { makeQuery } from '../../core/pir/query.ts';
import { decodeAnswerWire, encodeAnswer } from '../../core/pir/wire.ts';
import { seededRandom } from '../../scripts/demo/seeded-random.ts';
import { candidatesFromAnswer } from '../../sdk/region-answer.ts';

// Invented sites scattered over an invented 2 x 2 degree region, seeded.
let built: BuildResult;
let key: PirKeyPair;
beforeAll(async () => {
  const next = seededRandom(42);
  const sites = Array.from({ length: 400 }, (_, i) => ({ id: `post-${i}`, name: null, lat: 51 + 2 * next(), lon: 3 + 2 * next(), details: {} }));
  built = await buildVersion({ sites, detailColumns: [] }, { dataset: 'lantern-coast', version: 1 });
  key = await generateKeyPair({ modulusBits: 2048 });
});

describe('candidatesFromAnswer', () => {
  it('reads the same list as decoding every row of the region, asking only for the filled slots and one empty index', () => {
    const m = built.manifest;
    const r = m.record;
    const next = seededRandom(7);
    let savedRows = 0;
    for (let t = 0; t < 6; t++) {
      const point = { lat: 51 + 2 * next(), lon: 3 + 2 * next() };
      const region = locateRegion(m, point.lat, point.lon);
      const rows = answerQuery(built.matrix, key.n, makeQuery(key, m.matrix.columns, region.column));
      const everyRow = decodeCandidates(m, decodeRows(key, rows, region.rowStart, region.rowStart + region.rowCount));
      const lazy = candidatesFromAnswer(key, m, decodeAnswerWire(encodeAnswer(key.n.toString(16).length / 2, rows)), region);
      expect(lazy.candidates).toEqual(everyRow);
      const filled = everyRow.length;
      expect(lazy.rowsDecoded).toBe(filled * r.slotBits + (filled < r.slotsPerRegion ? r.indexBits : 0));
      savedRows += region.rowCount - lazy.rowsDecoded;
    }
    // The lists of this table are not all full, so some padding went unread.
    expect(savedRows).toBeGreaterThan(0);
  });
});
