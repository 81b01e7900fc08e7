import { keyExpired, type ClientKeyStore, type KeyLifetime } from '../../client-key.ts';
import { CAUTIONS, FAR_FROM_COVERAGE_CAUTION } from '../../../core/cautions/cautions.ts';
import { DEFAULT_KEY_LIFETIME } from '../../client-key.ts';
import { connect, type NearestResult } from '../../client.ts';
import { DEFAULT_MODULUS_BITS } from '../../../core/pir/params.ts';
import { diskKeyStore } from '../key-store.ts';
import { roundMilliseconds } from '../round-milliseconds.ts';
import { MAX_K } from '../../../core/geo/manifest.ts';
import { diskSealedCache } from '../sealed-store.ts';
import { connectionOptions, degrees, integerFlag, parseCommand, requireString, resolveConnection } from '../options.ts';

export const QUERY_HELP = `nearveil query --dataset SLUG --lat DEG --lon DEG [--k K] [--details] [--json]
  Finds the exact nearest site through the private protocol: the server answers an encrypted
  column query and never learns the point.
  --dataset SLUG     dataset to ask (the demo dataset is named in .nearveil/dev-credentials.json)
  --lat, --lon DEG   the point, in decimal degrees (WGS 84)
  --k K              the K nearest sites, nearest first (1 to the dataset's build maxK; default 1)
  --details          also fetch the site's full record (every column) in a second private round;
                     the version's sealed file is downloaded once and kept in .nearveil/sealed/
  --json             print one JSON object
  --key-days D, --key-queries Q   replace this machine's client key after D days or Q queries
                     (default ${DEFAULT_KEY_LIFETIME.days} and ${DEFAULT_KEY_LIFETIME.queries}): the server can link the queries of one key,
                     never their points; a new key is proven and registered once (about 1 s)
  NEARVEIL_ENDPOINT, NEARVEIL_API_KEY   override the dev credentials
  --endpoint URL, --api-key KEY         the same as flags (a key on a command line is visible to others: prefer the variable)`;

export async function queryCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values } = parseCommand('query', args, {
    ...connectionOptions,
    dataset: { type: 'string' },
    lat: { type: 'string' },
    lon: { type: 'string' },
    k: { type: 'string' },
    details: { type: 'boolean', default: false },
    'key-days': { type: 'string' },
    'key-queries': { type: 'string' },
  });
  if (values.help) return print(QUERY_HELP);
  const dataset = requireString(values.dataset, '--dataset', 'the slug of the dataset to ask');
  const lat = degrees(values.lat, '--lat', -90, 90);
  const lon = degrees(values.lon, '--lon', -180, 180);
  const k = integerFlag(values.k, '--k', 1, MAX_K, 1);
  const keyLifetime = {
    days: integerFlag(values['key-days'], '--key-days', 1, 365, DEFAULT_KEY_LIFETIME.days),
    queries: integerFlag(values['key-queries'], '--key-queries', 1, 1_000_000, DEFAULT_KEY_LIFETIME.queries),
  };
  const conn = resolveConnection(values);
  const apiKey = requireString(conn.apiKey, '--api-key', 'set NEARVEIL_API_KEY to an API key, or run `npm start` once to write dev credentials');
  const client = connect({
    endpoint: conn.endpoint,
    apiKey,
    modulusBits: DEFAULT_MODULUS_BITS,
    keyStore: announcingKeySetup(diskKeyStore(conn.home), keyLifetime),
    keyLifetime,
    sealedCache: diskSealedCache(conn.home),
  });
  const result = await client.nearest(dataset, { lat, lon }, { k, details: values.details });
  print(values.json ? JSON.stringify(jsonView(result)) : textView(result));
}

function jsonView(r: NearestResult) {
  return {
    dataset: r.dataset,
    version: r.version,
    results: r.results.map(({ id, name, lat, lon, distanceMeters, record }) => ({
      id,
      name,
      lat: round(lat, 6),
      lon: round(lon, 6),
      distanceMeters: round(distanceMeters, 1),
      ...(record ? { record } : {}),
    })),
    farFromCoverage: r.farFromCoverage,
    cautions: r.cautions,
    cost: roundMilliseconds(r.cost),
  };
}


function textView(r: NearestResult): string {
  const c = r.cost;
  const lines = r.farFromCoverage ? [`Warning: ${FAR_FROM_COVERAGE_CAUTION.text}`] : [];
  lines.push(r.results.length === 1 ? `Nearest site in ${r.dataset} (version ${r.version}):` : `${r.results.length} nearest sites in ${r.dataset} (version ${r.version}), nearest first:`);
  for (const [i, s] of r.results.entries()) {
    lines.push(`  ${r.results.length === 1 ? '' : `${i + 1}. `}${s.id}${s.name ? ` ${s.name}` : ''}  at ${s.lat.toFixed(5)}, ${s.lon.toFixed(5)}  ${formatMeters(s.distanceMeters)} in a straight line`);
    if (s.record) {
      lines.push(`    lat, lon: ${s.record.lat}, ${s.record.lon} (as stored)`);
      for (const [column, value] of Object.entries(s.record.details)) lines.push(`    ${column}: ${JSON.stringify(value)}`);
    }
  }
  lines.push(
    `Cost: ${c.modulusBits}-bit key, ${c.partition ? `two rounds (partition matrix ${c.partition.rows} x ${c.partition.columns}, then cell matrix` : 'matrix'} ` +
      `${c.rows} x ${c.columns}${c.partition ? ')' : ''}, ${kib(c.bytesUp)} up, ${kib(c.bytesDown)} down, ` +
      `server ${c.serverMs === null ? 'n/a' : c.serverMs.toFixed(0) + ' ms'}, client ${c.clientMs.toFixed(0)} ms`,
    ...(c.details
      ? [
          `Details: ${c.details.queries} private ${c.details.queries === 1 ? 'query' : 'queries'}, ${kib(c.details.bytesUp)} up, ${kib(c.details.bytesDown)} down, ` +
            `server ${c.details.serverMs === null ? 'n/a' : c.details.serverMs.toFixed(0) + ' ms'}, client ${c.details.clientMs.toFixed(0)} ms; ` +
            (c.details.sealedBytes > 0 ? `sealed file ${kib(c.details.sealedBytes)} downloaded (once per version)` : 'sealed file kept from before'),
        ]
      : []),
    ...(c.keySetup ? [keySetupLine(c.keySetup)] : []),
    ...CAUTIONS.map((c) => `Caution: ${c.text}`),
  );
  return lines.join('\n');
}

function keySetupLine(s: NonNullable<NearestResult['cost']['keySetup']>): string {
  const parts = [
    s.generateMs === undefined ? null : `made in ${s.generateMs.toFixed(0)} ms`,
    s.proveMs === undefined ? null : `proven in ${s.proveMs.toFixed(0)} ms (proof ${kib(s.proofBytes ?? 0)})`,
    s.registerMs === undefined ? null : `registered with the server in ${s.registerMs.toFixed(0)} ms`,
  ].filter(Boolean);
  return `Client key: ${parts.join(', ')}; this happens once per key.`;
}

const formatMeters = (m: number) => (m < 1000 ? `${m.toFixed(0)} m` : `${(m / 1000).toFixed(2)} km`);
const kib = (bytes: number) => `${(bytes / 1024).toFixed(0)} KiB`;
/** Decimal rounding for display: 6 places of a degree is about 0.1 m, finer than the quantisation. */
const round = (x: number, places: number) => Math.round(x * 10 ** places) / 10 ** places;

/** Says on stderr when a key must be made and proven first (about a second of CPU, once per key), so the wait is explained. */
function announcingKeySetup(store: ClientKeyStore, lifetime: KeyLifetime): ClientKeyStore {
  return {
    ...store,
    async load(bits) {
      const stored = await store.load(bits);
      if (!stored || keyExpired(stored, lifetime)) process.stderr.write(`Making and proving this machine's ${bits}-bit client key (about 1-2 s, once per key)...\n`);
      return stored;
    },
  };
}
