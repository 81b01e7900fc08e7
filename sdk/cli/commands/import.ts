import { readSiteColumns } from '../../../core/build/site-columns.ts';
import { coordinateWarnings } from '../../../core/geo/land-share.ts';
import { worldLand } from '../world-land.ts';
import { connectAdmin } from '../../admin.ts';
import { SlugSchema } from '../../../core/naming/dataset-slug.ts';
import { CliError } from '../cli-error.ts';
import { readUtf8File } from '../read-utf8-file.ts';
import { MAX_K } from '../../../core/geo/manifest.ts';
import { connectionOptions, integerFlag, parseCommand, requireString, resolveConnection } from '../options.ts';
import { layoutOption } from './plan.ts';
import { progressLine, type ProgressStream } from '../progress-line.ts';

export const IMPORT_HELP = `nearveil import FILE --dataset SLUG [--name NAME] [--layout auto|grid|adaptive|veiled] [--max-k K] [--publish] [--json]
  Uploads a site table (CSV with a header; columns id, lat, lon required, name optional, every
  other column a detail) as a new version of the dataset, builds its cell matrix and, with
  --publish, makes it the active version. The dataset is created if it does not exist.
  --layout veiled publishes only a coarse grid (see \`nearveil plan\`); queries then take two rounds.
  --max-k K   build for up to the K nearest sites (1 to 8, default 1; veiled serves 1 only); lists grow with K
  Progress (upload, each build stage with its percent, elapsed time) goes to stderr: a bar on a
  terminal, plain lines otherwise or with --json.
  NEARVEIL_ENDPOINT, NEARVEIL_TOKEN   override the dev credentials (the token is the tenant admin's)
  --endpoint URL, --token TOKEN       the same as flags (a token on a command line is visible to others: prefer the variable)`;

export async function importCommand(args: string[], print: (line: string) => void, progressStream: ProgressStream = process.stderr): Promise<void> {
  const { values, positionals } = parseCommand('import', args, {
    ...connectionOptions,
    dataset: { type: 'string' },
    name: { type: 'string' },
    publish: { type: 'boolean', default: false },
    layout: { type: 'string', default: 'auto' },
    'max-k': { type: 'string' },
  });
  if (values.help) return print(IMPORT_HELP);
  if (positionals.length !== 1) throw new CliError(`import: expected one FILE, got ${positionals.length === 0 ? 'none' : positionals.join(' ')}`);
  const file = positionals[0]!;
  const maxK = integerFlag(values['max-k'], '--max-k', 1, MAX_K, 1);
  const dataset = requireString(values.dataset, '--dataset', 'the slug of the dataset to add a version to');
  const slug = SlugSchema.safeParse(dataset);
  if (!slug.success) throw new CliError(`--dataset: ${slug.error.issues[0]?.message}, got "${dataset}"`);
  const { bytes: csv, text } = readUtf8File(file);
  // Checked here first, with the server's own rules: a table with problems creates no dataset.
  const columns = readSiteColumns(text);
  const warnings = coordinateWarnings(worldLand(), columns.lats, columns.lons);
  for (const w of warnings) progressStream.write(`Warning: ${w}\n`);
  const conn = resolveConnection(values);
  const token = requireString(conn.token, '--token', 'set NEARVEIL_TOKEN to the tenant admin token, or run `npm start` once to write dev credentials');
  const admin = connectAdmin({ endpoint: conn.endpoint, token });
  const progress = progressLine(progressStream, { plain: values.json });
  let built: Awaited<ReturnType<typeof admin.build>>;
  let uploaded: Awaited<ReturnType<typeof admin.uploadSiteTable>>;
  const created = await admin.ensureDataset(dataset, values.name);
  try {
    progress.update(`uploading ${(csv.length / 2 ** 20).toFixed(1)} MiB`, 0);
    uploaded = await admin.uploadSiteTable(dataset, csv).catch(async (err: unknown) => {
      // A refused upload leaves no empty dataset behind when this import made it (it has no version yet).
      if (created) await admin.deleteDataset(dataset).catch(() => undefined);
      throw err;
    });
    progress.update('queued', 0);
    built = await admin.build(dataset, uploaded.version, layoutOption(values.layout), maxK, {
      pollMs: 300,
      onProgress: (info) => progress.update(info.progress?.stage ?? 'queued', info.progress?.percent ?? 0),
    });
    progress.update('built', 100);
  } finally {
    progress.done();
  }
  const published = values.publish ? await admin.publish(dataset, uploaded.version) : null;
  if (values.json) {
    print(JSON.stringify({ dataset, version: uploaded.version, siteCount: uploaded.siteCount, state: published ? 'active' : built.state, layout: built.layout, layoutReason: built.layoutReason, matrix: built.matrix, warnings }));
    return;
  }
  print(`Uploaded ${uploaded.siteCount} sites as version ${uploaded.version} of ${dataset}.`);
  print(`Built: matrix ${built.matrix.rows} x ${built.matrix.columns} bits, content hash ${built.contentHash?.slice(0, 16)}...`);
  if (built.layoutReason) print(`Layout: ${built.layoutReason}.`);
  print(published ? `Published: version ${published.activeVersion} is now active.` : `Not published yet: \`nearveil publish --dataset ${dataset} --version ${uploaded.version}\` makes it active (running import again would upload a second version).`);
}
