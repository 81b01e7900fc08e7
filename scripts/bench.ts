/**
 * `npm run bench`: measurements printed side by side from one run (never asserted in tests).
 * `--json` prints the same figures as one JSON object. Machines are noisy: medians of repeats.
 */
import { BigInteger } from 'jsbn';
import { buildVersion } from '../core/build/build-version.ts';
import { decodeCandidates, nearestCandidates } from '../core/geo/candidates.ts';
import { locateRegion } from '../core/geo/locate.ts';
import { parseSiteTable } from '../core/geo/site-table.ts';
import { answerQuery } from '../core/pir/answer.ts';
import { decodeRows } from '../core/pir/decode.ts';
import { generateKeyPair } from '../core/pir/keys.ts';
import { makeQuery } from '../core/pir/query.ts';
import { validateQuery } from '../core/pir/validate.ts';
import { decodeAnswer, decodeQuery, encodeAnswer, encodeQuery } from '../core/pir/wire.ts';
import { randomBelow } from '../core/bigint/random.ts';
import { harrowValeCsv } from './demo/harrow-vale.ts';

const asJson = process.argv.includes('--json');
const log = (line: string) => {
  if (!asJson) console.log(line);
};

async function timeMs(fn: () => unknown | Promise<unknown>): Promise<number> {
  const t = performance.now();
  await fn();
  return performance.now() - t;
}

async function median(repeats: number, fn: () => unknown | Promise<unknown>): Promise<number> {
  const times: number[] = [];
  for (let i = 0; i < repeats; i++) times.push(await timeMs(fn));
  times.sort((a, b) => a - b);
  return times[Math.floor(times.length / 2)]!;
}

async function keygen() {
  const webcrypto = await median(5, () => generateKeyPair({ modulusBits: 2048, method: 'webcrypto' }));
  const own = await median(3, () => generateKeyPair({ modulusBits: 2048, method: 'own' }));
  log(`key pair, 2048-bit    webcrypto ${webcrypto.toFixed(0)} ms   own generator ${own.toFixed(0)} ms   (own / webcrypto ${(own / webcrypto).toFixed(1)}x)`);
  return { webcryptoMs: webcrypto, ownMs: own };
}

async function multiplication() {
  const key = await generateKeyPair({ modulusBits: 2048 });
  const n = key.n;
  const xs = Array.from({ length: 2000 }, () => randomBelow(n));
  const count = xs.length - 1;
  const bigintNs = ((await median(5, () => {
    let acc = xs[0]!;
    for (let i = 1; i < xs.length; i++) acc = (acc * xs[i]!) % n;
  })) * 1e6) / count;
  const jn = new BigInteger(n.toString(16), 16);
  const jx = xs.map((x) => new BigInteger(x.toString(16), 16));
  const jsbnNs = ((await median(3, () => {
    let acc = jx[0]!;
    for (let i = 1; i < jx.length; i++) acc = acc.multiply(jx[i]!).mod(jn);
  })) * 1e6) / count;
  log(`modular product, 2048 BigInt ${bigintNs.toFixed(0)} ns   jsbn ${jsbnNs.toFixed(0)} ns   (jsbn / BigInt ${(jsbnNs / bigintNs).toFixed(1)}x)`);
  return { bigintNs, jsbnNs };
}

async function demoQuery() {
  const table = parseSiteTable(harrowValeCsv());
  const buildMs = await median(3, () => buildVersion(table, { dataset: 'harrow-vale-care', version: 1 }));
  const built = await buildVersion(table, { dataset: 'harrow-vale-care', version: 1 });
  const m = built.manifest;
  const bits = m.matrix.rows * m.matrix.columns;
  log(`demo build            ${table.sites.length} sites in ${buildMs.toFixed(0)} ms; grid ${m.layout.rows} x ${m.layout.cols}, list length ${m.record.slotsPerRegion}, ${(bits / table.sites.length).toFixed(0)} matrix bits per site`);
  const key = await generateKeyPair({ modulusBits: 2048 });
  const point = { lat: 45.62, lon: -111.42 };
  const region = locateRegion(m, point.lat, point.lon);
  let body = new Uint8Array();
  const queryMs = await timeMs(() => (body = encodeQuery(key.n, makeQuery(key, m.matrix.columns, region.column))));
  let answer = new Uint8Array();
  const serverMs = await timeMs(() => {
    const { n, values } = decodeQuery(body);
    validateQuery(n, values, m.matrix.columns);
    answer = encodeAnswer(256, answerQuery(built.matrix, n, values));
  });
  let nearest = '';
  const decodeMs = await timeMs(() => {
    const rows = decodeAnswer(answer).rows;
    const found = nearestCandidates(decodeCandidates(m, decodeRows(key, rows, region.rowStart, region.rowStart + region.rowCount)), point.lat, point.lon, 1)[0]!;
    nearest = `${m.siteIds[found.index]} at ${found.distanceMeters.toFixed(0)} m`;
  });
  const result = {
    sites: table.sites.length,
    buildMs,
    matrix: { rows: m.matrix.rows, columns: m.matrix.columns, ones: m.matrix.ones, bitsPerSite: bits / table.sites.length },
    bytesUp: body.length,
    bytesDown: answer.length,
    clientMs: queryMs + decodeMs,
    serverMs,
    nearest,
  };
  log(`demo query, 2048-bit  matrix ${m.matrix.rows} x ${m.matrix.columns} (${m.matrix.ones} ones)   up ${(body.length / 1024).toFixed(0)} KiB   down ${(answer.length / 1024).toFixed(0)} KiB   server ${serverMs.toFixed(0)} ms   client ${(queryMs + decodeMs).toFixed(0)} ms   -> ${nearest}`);
  return result;
}

const report = { keygen: await keygen(), multiplication: await multiplication(), demoQuery: await demoQuery() };
if (asJson) console.log(JSON.stringify(report));
