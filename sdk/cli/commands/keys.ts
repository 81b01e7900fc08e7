import { connectAdmin, type ApiKeyInfo, type NewApiKey } from '../../admin.ts';
import { SlugSchema } from '../../../core/naming/dataset-slug.ts';
import { CliError } from '../cli-error.ts';
import { originFlag } from '../origin-flag.ts';
import { connectionOptions, integerFlag, parseCommand, requireString, resolveConnection } from '../options.ts';

export const KEY_HELP = `nearveil key list [--json]
  The tenant's API keys: kind, label, datasets, quota and use this month; a browser key's
  origins, per-client rate and the key itself (it is public).

nearveil key create --label TEXT [--dataset SLUG]... [--quota N] [--json]
nearveil key create --browser --origin URL [--origin URL]... [--rate N] --label TEXT [--dataset SLUG]... [--quota N]
  A server key (default) is shown once: keep it on your server. A browser key is for web pages:
  it works only from pages of the exact origins listed (https://host or https://host:port, no
  path) and lets each client address make --rate requests a minute (default 30).

nearveil key origins --id ID --origin URL [--origin URL]... [--rate N] [--json]
  Replaces a browser key's origins (and rate).

nearveil key revoke --id ID [--json]
  NEARVEIL_ENDPOINT, NEARVEIL_TOKEN   override the dev credentials (the token is the tenant admin's)`;

const keyOptions = {
  ...connectionOptions,
  label: { type: 'string' },
  dataset: { type: 'string', multiple: true },
  quota: { type: 'string' },
  browser: { type: 'boolean', default: false },
  origin: { type: 'string', multiple: true },
  rate: { type: 'string' },
  id: { type: 'string' },
} as const;

const ACTIONS = ['list', 'create', 'origins', 'revoke'] as const;

/** `nearveil key list|create|origins|revoke`: the tenant admin's API keys. */
export async function keyCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, positionals } = parseCommand('key', args, keyOptions);
  if (values.help) return print(KEY_HELP);
  const [action, extra] = positionals;
  if (!ACTIONS.includes(action as (typeof ACTIONS)[number]) || extra !== undefined) {
    throw new CliError(`key: expected one of ${ACTIONS.map((a) => `\`nearveil key ${a}\``).join(', ')}, got "${positionals.join(' ')}" (see \`nearveil key --help\`)`);
  }
  // Connects only once the flags are checked, so a mistake is named before any credential is needed.
  const admin = () => {
    const conn = resolveConnection(values);
    return connectAdmin({ endpoint: conn.endpoint, token: requireString(conn.token, '--token', 'set NEARVEIL_TOKEN to the tenant admin token, or run `npm start` once to write dev credentials') });
  };
  if (action === 'list') {
    const { keys } = await admin().apiKeys();
    if (values.json) return print(JSON.stringify(keys));
    if (keys.length === 0) return print('No API keys yet: make one with `nearveil key create --label TEXT`.');
    for (const key of keys) for (const line of describeKey(key)) print(line);
    return;
  }
  if (action === 'create') {
    const label = requireString(values.label, '--label', 'a name for the key, such as the app or page that uses it');
    const body: NewApiKey = { label };
    if (values.dataset) body.datasets = values.dataset.map((d) => slug(d));
    if (values.quota !== undefined) body.monthlyQuota = integerFlag(values.quota, '--quota', 1, 1_000_000_000_000, 0);
    if (values.browser) {
      if (!values.origin?.length) throw new CliError('key create --browser: name at least one --origin, the exact origin of a page that will use the key (for example https://finder.example)');
      Object.assign(body, { kind: 'browser', origins: values.origin.map((o) => originFlag(o, '--origin')) });
      if (values.rate !== undefined) body.requestsPerMinute = integerFlag(values.rate, '--rate', 1, 10_000, 30);
    } else if (values.origin || values.rate !== undefined) {
      throw new CliError('key create: --origin and --rate are for browser keys; add --browser');
    }
    const key = await admin().createApiKey(body);
    if (values.json) return print(JSON.stringify(key));
    for (const line of describeKey(key)) print(line);
    print(key.kind === 'browser' ? 'A browser key is public: put it in your pages; it works only from the origins above.' : `Secret (shown once; keep it on your server): ${key.secret}`);
    return;
  }
  const id = requireString(values.id, '--id', 'the key id, as `nearveil key list` shows it');
  if (action === 'origins') {
    if (!values.origin?.length) throw new CliError('key origins: name the new origins with --origin (they replace the old ones)');
    const change: { origins: string[]; requestsPerMinute?: number } = { origins: values.origin.map((o) => originFlag(o, '--origin')) };
    if (values.rate !== undefined) change.requestsPerMinute = integerFlag(values.rate, '--rate', 1, 10_000, 30);
    const key = await admin().updateBrowserKey(id, change);
    if (values.json) return print(JSON.stringify(key));
    for (const line of describeKey(key)) print(line);
    return;
  }
  const revoked = await admin().revokeApiKey(id);
  if (values.json) return print(JSON.stringify(revoked));
  print(`Revoked ${revoked.id} at ${revoked.revokedAt}: it is refused from now on.`);
}

function describeKey(key: ApiKeyInfo): string[] {
  const scope = key.datasets === null ? 'every dataset' : key.datasets.join(', ');
  const quota = key.monthlyQuota === null ? 'no monthly quota' : `${key.usedThisMonth} of ${key.monthlyQuota} queries this month`;
  const lines = [`${key.id}  ${key.kind} key "${key.label}"${key.revokedAt ? ` (revoked ${key.revokedAt})` : ''}`, `  datasets: ${scope}; ${quota}`];
  if (key.kind === 'browser') {
    lines.push(`  origins: ${key.origins!.join(', ')}; ${key.requestsPerMinute} requests a minute per client`);
    if (key.secret) lines.push(`  key: ${key.secret}`);
  }
  return lines;
}

function slug(text: string): string {
  const parsed = SlugSchema.safeParse(text);
  if (!parsed.success) throw new CliError(`--dataset: ${parsed.error.issues[0]?.message}, got "${text}"`);
  return parsed.data;
}
