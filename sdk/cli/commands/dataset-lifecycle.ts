import { connectAdmin, type DeletedDataset } from '../../admin.ts';
import { NearveilError } from '../../http.ts';
import { SlugSchema } from '../../../core/naming/dataset-slug.ts';
import { CliError } from '../cli-error.ts';
import { connectionOptions, parseCommand, requireString, resolveConnection } from '../options.ts';

export const DATASET_HELP = `nearveil dataset rename --dataset SLUG --name TEXT [--json]
  Changes the name people read in the console and here. The slug stays as it is: apps use it
  in their URLs and API keys name it.

nearveil dataset delete --dataset SLUG [--confirm SLUG] [--json]
  Deletes a dataset (tenant admins). It answers no query from then on and leaves every list;
  its usage stays in reports and statements; its slug is never given to another dataset; the
  server's sweep removes its stored files later. A dataset with an active version is deleted
  only with --confirm naming its slug again.
  NEARVEIL_ENDPOINT, NEARVEIL_TOKEN   override the dev credentials (the token is the tenant admin's)`;

const lifecycleOptions = { ...connectionOptions, dataset: { type: 'string' }, name: { type: 'string' }, confirm: { type: 'string' } } as const;
const SUBCOMMANDS = ['rename', 'delete'] as const;

/** `nearveil dataset rename|delete`: the two changes a dataset itself takes (its versions have their own commands). */
export async function datasetCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, positionals } = parseCommand('dataset', args, lifecycleOptions);
  if (values.help) return print(DATASET_HELP);
  const [action, extra] = positionals;
  if (!SUBCOMMANDS.includes(action as (typeof SUBCOMMANDS)[number]) || extra !== undefined) {
    throw new CliError(`dataset: expected \`nearveil dataset rename\` or \`nearveil dataset delete\`, got "${positionals.join(' ')}" (see \`nearveil dataset --help\`)`);
  }
  const dataset = slugFlag(values.dataset, '--dataset', 'the slug of the dataset, as `nearveil versions` and the console list it');
  if (action === 'rename') {
    if (values.confirm !== undefined) throw new CliError('dataset rename: --confirm does not apply here (it is for delete)');
    const name = requireString(values.name, '--name', 'the new name people should read, in quotes if it has spaces');
    const renamed = await admin(values).renameDataset(dataset, name);
    if (values.json) return print(JSON.stringify(renamed));
    print(`Renamed: ${renamed.slug} is now called "${renamed.name}". Its slug stays ${renamed.slug}.`);
    return;
  }
  if (values.name !== undefined) throw new CliError('dataset delete: --name does not apply here (it is for rename)');
  const confirm = values.confirm === undefined ? undefined : slugFlag(values.confirm, '--confirm', `the slug of the dataset again, ${dataset}`);
  if (confirm !== undefined && confirm !== dataset) throw new CliError(`--confirm: expected the slug of the dataset to delete, "${dataset}", got "${confirm}"`);
  let deleted: DeletedDataset;
  try {
    deleted = await admin(values).deleteDataset(dataset, confirm === undefined ? {} : { confirm });
  } catch (err) {
    // The server's advice is for HTTP callers; at the terminal the confirmation is a flag.
    if (err instanceof NearveilError && err.code === 'confirmation_required') {
      throw new NearveilError(err.status, err.code, err.message.replace(/; to delete it anyway, send .*$/, `; to delete it anyway, run \`nearveil dataset delete --dataset ${dataset} --confirm ${dataset}\``), err.field);
    }
    throw err;
  }
  if (values.json) return print(JSON.stringify(deleted));
  print(`Deleted ${deleted.dataset} ("${deleted.name}"): it answers no queries from now on${deleted.activeVersion === null ? '' : ` (v${deleted.activeVersion} was active)`}.`);
  print(`Its usage stays in reports and statements; the slug ${deleted.dataset} is not given to another dataset; the server's sweep removes its stored files.`);
}

function slugFlag(value: string | undefined, flag: string, hint: string): string {
  const text = requireString(value, flag, hint);
  const slug = SlugSchema.safeParse(text);
  if (!slug.success) throw new CliError(`${flag}: ${slug.error.issues[0]?.message}, got "${text}"`);
  return slug.data;
}

function admin(values: { endpoint?: string; token?: string; 'api-key'?: string }) {
  const conn = resolveConnection(values);
  const token = requireString(conn.token, '--token', 'pass the tenant admin token, or run `npm start` once to write dev credentials');
  return connectAdmin({ endpoint: conn.endpoint, token });
}
