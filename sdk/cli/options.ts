import { parseArgs, type ParseArgsConfig } from 'node:util';
import { CliError } from './cli-error.ts';
import { nearveilHome, readDevCredentials } from './dev-home.ts';

export const DEFAULT_ENDPOINT = 'http://127.0.0.1:8787';

/** Options every command that talks to the server accepts. */
export const connectionOptions = {
  endpoint: { type: 'string' },
  'api-key': { type: 'string' },
  token: { type: 'string' },
  json: { type: 'boolean', default: false },
  help: { type: 'boolean', short: 'h', default: false },
} as const satisfies ParseArgsConfig['options'];

/**
 * Glues a negative number to its flag (`--lon -111.4` becomes `--lon=-111.4`): node's parseArgs
 * would otherwise read `-111.4` as an unknown option, and western longitudes are negative.
 */
function joinNegativeNumbers(args: string[], options: NonNullable<ParseArgsConfig['options']>): string[] {
  const out: string[] = [];
  for (let i = 0; i < args.length; i++) {
    const arg = args[i]!;
    const next = args[i + 1];
    const name = arg.startsWith('--') && !arg.includes('=') ? arg.slice(2) : undefined;
    if (name && options[name]?.type === 'string' && next !== undefined && /^-(\d|\.\d)/.test(next)) {
      out.push(`${arg}=${next}`);
      i++;
    } else {
      out.push(arg);
    }
  }
  return out;
}

/** parseArgs with its errors turned into one readable line. */
export function parseCommand<T extends NonNullable<ParseArgsConfig['options']>>(command: string, args: string[], options: T) {
  try {
    return parseArgs({ args: joinNegativeNumbers(args, options), options, allowPositionals: true, strict: true });
  } catch (err) {
    const reason = err instanceof Error ? err.message.replace(/^.*?: /, '') : String(err);
    throw new CliError(`${command}: ${reason} (see \`nearveil help\`)`);
  }
}

export interface Connection {
  endpoint: string;
  apiKey: string | undefined;
  token: string | undefined;
  home: string;
}

/**
 * Flags win over the environment (NEARVEIL_ENDPOINT, NEARVEIL_API_KEY, NEARVEIL_TOKEN), which
 * wins over the dev credentials file that `npm start` writes. A secret given as a flag works but
 * is warned about: other users of the machine see command lines (`ps`) and shells keep them.
 */
export function resolveConnection(values: { endpoint?: string; 'api-key'?: string; token?: string }, warn: (line: string) => void = (line) => process.stderr.write(line + '\n')): Connection {
  const home = nearveilHome();
  const saved = readDevCredentials(home);
  for (const [flag, variable] of [['api-key', 'NEARVEIL_API_KEY'], ['token', 'NEARVEIL_TOKEN']] as const) {
    if (values[flag] !== undefined) warn(`Warning: --${flag} puts a secret on the command line, where other users of this machine can see it (ps) and your shell keeps it; set ${variable} instead.`);
  }
  const fromEnv = (name: string) => (process.env[name]?.trim() ? process.env[name]!.trim() : undefined);
  const endpoint = values.endpoint ?? fromEnv('NEARVEIL_ENDPOINT') ?? saved.endpoint ?? DEFAULT_ENDPOINT;
  try {
    new URL(endpoint);
  } catch {
    throw new CliError(`--endpoint: expected a URL such as ${DEFAULT_ENDPOINT}, got "${endpoint}"`);
  }
  return {
    endpoint,
    apiKey: values['api-key'] ?? fromEnv('NEARVEIL_API_KEY') ?? saved.apiKey,
    token: values.token ?? fromEnv('NEARVEIL_TOKEN') ?? saved.adminToken,
    home,
  };
}

export function requireString(value: string | undefined, flag: string, hint: string): string {
  if (value === undefined || value.trim() === '') throw new CliError(`${flag} is required: ${hint}`);
  return value;
}

/** A count flag such as --k or --max-k: an integer within [min, max]; `fallback` when absent. */
export function integerFlag(value: string | undefined, flag: string, min: number, max: number, fallback: number): number {
  if (value === undefined) return fallback;
  const n = Number(value);
  if (!/^\s*\d+\s*$/.test(value) || !Number.isSafeInteger(n) || n < min || n > max) {
    throw new CliError(`${flag}: expected a whole number from ${min} to ${max}, got "${value}"`);
  }
  return n;
}

/** A coordinate flag: a finite decimal number of degrees within [min, max]. */
export function degrees(value: string | undefined, flag: string, min: number, max: number): number {
  const text = requireString(value, flag, `decimal degrees between ${min} and ${max}`);
  const n = Number(text);
  if (!/^\s*[-+]?(\d+\.?\d*|\.\d+)\s*$/.test(text) || !Number.isFinite(n) || n < min || n > max) {
    throw new CliError(`${flag}: expected decimal degrees between ${min} and ${max}, got "${text}"`);
  }
  return n;
}
