import { connectAdmin, type VersionInfo } from '../../admin.ts';
import { SlugSchema } from '../../../core/naming/dataset-slug.ts';
import { CliError } from '../cli-error.ts';
import { connectionOptions, parseCommand, requireString, resolveConnection } from '../options.ts';

export const VERSIONS_HELP = `nearveil versions --dataset SLUG [--json]
  Lists the dataset's versions, newest first: state (draft, building, ready, active, retired,
  failed), build progress or error, matrix shape, and until when a replaced version still answers.

nearveil publish --dataset SLUG --version V [--json]
  Makes a built (ready) version the active one. The version it replaces keeps answering for the
  grace period (VERSION_GRACE_SECONDS), so apps in flight do not fail.

nearveil rollback --dataset SLUG [--to V] [--json]
  Makes an earlier version active again: V, or by default the newest earlier published version.
  NEARVEIL_ENDPOINT, NEARVEIL_TOKEN   override the dev credentials (the token is the tenant admin's)
  --endpoint URL, --token TOKEN       the same as flags (a token on a command line is visible to others: prefer the variable)`;

const versionOptions = { ...connectionOptions, dataset: { type: 'string' }, version: { type: 'string' }, to: { type: 'string' } } as const;

function parse(command: string, args: string[]) {
  const { values, positionals } = parseCommand(command, args, versionOptions);
  if (positionals.length > 0) throw new CliError(`${command}: unexpected argument "${positionals[0]}" (see \`nearveil help\`)`);
  const dataset = values.help ? '' : requireString(values.dataset, '--dataset', 'the slug of the dataset');
  const slug = SlugSchema.safeParse(dataset);
  if (!values.help && !slug.success) throw new CliError(`--dataset: ${slug.error.issues[0]?.message}, got "${dataset}"`);
  for (const [flag, allowed] of [['version', command === 'publish'], ['to', command === 'rollback']] as const) {
    if (values[flag] !== undefined && !allowed) throw new CliError(`${command}: --${flag} does not apply here (see \`nearveil help\`)`);
  }
  return { values, dataset };
}

function versionNumber(value: string | undefined, flag: string): number {
  const text = requireString(value, flag, 'a version number, as `nearveil versions` lists them');
  if (!/^\d{1,9}$/.test(text) || Number(text) < 1) throw new CliError(`${flag}: expected a whole number >= 1, got "${text}"`);
  return Number(text);
}

function admin(values: { endpoint?: string; token?: string; 'api-key'?: string }) {
  const conn = resolveConnection(values);
  const token = requireString(conn.token, '--token', 'set NEARVEIL_TOKEN to the tenant admin token, or run `npm start` once to write dev credentials');
  return connectAdmin({ endpoint: conn.endpoint, token });
}

function describe(v: VersionInfo): string {
  const shape = v.matrix ? `, matrix ${v.matrix.rows} x ${v.matrix.columns} (${v.layout})` : '';
  const extra =
    v.state === 'building' ? ` ${v.progress?.stage ?? 'queued'} ${v.progress?.percent ?? 0}%` :
    v.state === 'failed' ? `: ${v.error}` :
    v.state === 'ready' && v.servedUntil ? `, still answering until ${v.servedUntil}` : '';
  return `  v${v.version}  ${v.state}${extra}  ${v.siteCount} sites${shape}${v.author ? `  by ${v.author}` : ''}`;
}

export async function versionsCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, dataset } = parse('versions', args);
  if (values.help) return print(VERSIONS_HELP);
  const list = await admin(values).versions(dataset);
  if (values.json) return print(JSON.stringify(list));
  print(`${list.dataset}: active version ${list.activeVersion ?? 'none'}`);
  for (const v of list.versions) print(describe(v));
}

export async function publishCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, dataset } = parse('publish', args);
  if (values.help) return print(VERSIONS_HELP);
  const result = await admin(values).publish(dataset, versionNumber(values.version, '--version'));
  if (values.json) return print(JSON.stringify(result));
  print(`Published: version ${result.activeVersion} of ${dataset} is now active.`);
  if (result.previousVersion !== null && result.previousVersion !== result.activeVersion) {
    print(`Version ${result.previousVersion} keeps answering for ${result.graceSeconds} s, then retires.`);
  }
}

export async function rollbackCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, dataset } = parse('rollback', args);
  if (values.help) return print(VERSIONS_HELP);
  const to = values.to === undefined ? undefined : versionNumber(values.to, '--to');
  const result = await admin(values).rollback(dataset, to);
  if (values.json) return print(JSON.stringify(result));
  print(`Rolled back: version ${result.activeVersion} of ${dataset} is active again (was ${result.previousVersion}).`);
  print(`Version ${result.previousVersion} keeps answering for ${result.graceSeconds} s, then retires.`);
}
