import { connectAdmin, type FinderSettings } from '../../admin.ts';
import { SlugSchema } from '../../../core/naming/dataset-slug.ts';
import { CliError } from '../cli-error.ts';
import { originFlag } from '../origin-flag.ts';
import { connectionOptions, integerFlag, parseCommand, requireString, resolveConnection } from '../options.ts';

export const FINDER_HELP = `nearveil finder show|on|off --dataset SLUG [--frame-origin URL]... [--k N] [--rate N] [--json]
  The dataset's finder page: a public page that finds the nearest sites in the visitor's
  browser (the position never leaves the device). \`on\` switches it on and prints its address
  and an iframe tag to embed it; \`off\` takes it down at once; \`show\` prints the settings.
  --frame-origin URL  a site that may show the page in a frame (repeat; none: a link only)
  --k N               sites shown, nearest first (1-8, default 3; at most what the version was built for)
  --rate N            requests a minute one visitor address may make (default 30)
  NEARVEIL_ENDPOINT, NEARVEIL_TOKEN   override the dev credentials (the token is the tenant admin's)`;

const finderOptions = {
  ...connectionOptions,
  dataset: { type: 'string' },
  'frame-origin': { type: 'string', multiple: true },
  k: { type: 'string' },
  rate: { type: 'string' },
} as const;

const ACTIONS = ['show', 'on', 'off'] as const;

/** `nearveil finder show|on|off`: the tenant admin's switch for a dataset's finder page. */
export async function finderCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, positionals } = parseCommand('finder', args, finderOptions);
  if (values.help) return print(FINDER_HELP);
  const [action, extra] = positionals;
  if (!ACTIONS.includes(action as (typeof ACTIONS)[number]) || extra !== undefined) {
    throw new CliError(`finder: expected \`nearveil finder show\`, \`on\` or \`off\`, got "${positionals.join(' ')}" (see \`nearveil finder --help\`)`);
  }
  const text = requireString(values.dataset, '--dataset', 'the slug of the dataset whose page this is');
  const slug = SlugSchema.safeParse(text);
  if (!slug.success) throw new CliError(`--dataset: ${slug.error.issues[0]?.message}, got "${text}"`);
  const settings: { enabled: boolean; frameOrigins?: string[]; k?: number; requestsPerMinute?: number } = { enabled: action === 'on' };
  if (values['frame-origin']) settings.frameOrigins = values['frame-origin'].map((o) => originFlag(o, '--frame-origin'));
  if (values.k !== undefined) settings.k = integerFlag(values.k, '--k', 1, 8, 3);
  if (values.rate !== undefined) settings.requestsPerMinute = integerFlag(values.rate, '--rate', 1, 10_000, 30);
  if (action !== 'on' && Object.keys(settings).length > 1) throw new CliError(`finder ${action}: --frame-origin, --k and --rate go with \`nearveil finder on\``);
  const conn = resolveConnection(values);
  const admin = connectAdmin({ endpoint: conn.endpoint, token: requireString(conn.token, '--token', 'set NEARVEIL_TOKEN to the tenant admin token, or run `npm start` once to write dev credentials') });
  const view = action === 'show' ? await admin.finder(slug.data) : await admin.setFinder(slug.data, settings);
  if (values.json) return print(JSON.stringify(view));
  for (const line of describeFinder(view)) print(line);
}

function describeFinder(view: FinderSettings): string[] {
  if (!view.enabled) return [`The finder page of ${view.dataset} is off. Switch it on with \`nearveil finder on --dataset ${view.dataset}\`.`];
  const frames = view.frameOrigins.length === 0 ? 'no other site (link to it instead)' : view.frameOrigins.join(', ');
  return [
    `The finder page of ${view.dataset} is on: ${view.url}`,
    `  shows the ${view.k} nearest sites; ${view.requestsPerMinute} requests a minute per visitor address; may be framed by ${frames}`,
    'Embed it with:',
    `  ${view.embed}`,
  ];
}
