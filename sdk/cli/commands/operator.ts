import { randomUUID } from 'node:crypto';
import { NewPasswordSchema } from '../../../api/accounts/account-schemas.ts';
import { hashPassword } from '../../../api/auth/password-hash.ts';
import { EmailSchema } from '../../../api/auth/session-routes.ts';
import { CliError } from '../cli-error.ts';
import { parseCommand } from '../options.ts';
import { promptHidden } from '../prompt-hidden.ts';
import { d1Execute, sqlText, type D1Target } from '../wrangler-d1.ts';

export const OPERATOR_HELP = `nearveil operator init --email ADDRESS (--local [--persist-to DIR] | --remote) [--database NAME]
  Creates the first operator of a deployment, straight in its D1 database through
  \`wrangler d1 execute\` (--remote: the deployed database, after \`wrangler login\`; --local: the
  one \`wrangler dev\` uses, in DIR if given). The password comes from NEARVEIL_OPERATOR_PASSWORD or,
  at a terminal, from a prompt that does not echo (asked twice); never from the command line.
  Refuses when the database already has an operator: sign in as that one and add others.
  --database NAME    the D1 database or binding in wrangler.toml (default DB)`;

/** `nearveil operator init`: the way into a fresh deployment, whose D1 has no user yet. */
export async function operatorCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, positionals } = parseCommand('operator', args, {
    email: { type: 'string' },
    local: { type: 'boolean', default: false },
    remote: { type: 'boolean', default: false },
    'persist-to': { type: 'string' },
    database: { type: 'string', default: 'DB' },
    help: { type: 'boolean', short: 'h', default: false },
  });
  if (values.help) return print(OPERATOR_HELP);
  if (positionals[0] !== 'init' || positionals.length > 1) {
    throw new CliError(`operator: expected \`nearveil operator init\`, got "${positionals.join(' ')}" (see \`nearveil operator --help\`)`);
  }
  if (values.local === values.remote) throw new CliError('operator init: say which database with exactly one of --local and --remote');
  if (values.remote && values['persist-to'] !== undefined) throw new CliError('--persist-to: only with --local (the folder of a local D1 state)');
  if (!/^[A-Za-z0-9_-]{1,64}$/.test(values.database)) throw new CliError(`--database: expected a D1 database or binding name, got "${values.database}"`);
  const email = EmailSchema.safeParse(values.email ?? '');
  if (!email.success) throw new CliError(`--email: expected the operator's email address, got "${values.email ?? ''}"`);
  const target: D1Target = values.local ? { where: 'local', persistTo: values['persist-to'], database: values.database } : { where: 'remote', database: values.database };

  // Checked before asking for a password, and again by the insert itself.
  if (operatorCount(target) > 0) throw operatorExists(target);
  const password = await operatorPassword();
  const id = randomUUID();
  const hash = await hashPassword(password);
  // One statement: the insert happens only while no operator exists, so two runs cannot both add one.
  d1Execute(
    target,
    `INSERT INTO users (id, tenant_id, email, role, password_hash) SELECT ${sqlText(id)}, NULL, ${sqlText(email.data)}, 'operator', ${sqlText(hash)} ` +
      `WHERE NOT EXISTS (SELECT 1 FROM users WHERE role = 'operator' AND disabled_at IS NULL) AND NOT EXISTS (SELECT 1 FROM users WHERE email = ${sqlText(email.data)}); ` +
      `INSERT INTO audit_events (id, tenant_id, actor_kind, actor_id, actor_label, action, target, detail) SELECT ${sqlText(randomUUID())}, NULL, 'cli', 'operator-init', 'nearveil operator init', 'user.create', ${sqlText(`user ${email.data}`)}, ${sqlText(JSON.stringify({ id, role: 'operator' }))} ` +
      `WHERE EXISTS (SELECT 1 FROM users WHERE id = ${sqlText(id)})`,
  );
  const [made] = d1Execute(target, `SELECT email FROM users WHERE id = ${sqlText(id)}`);
  if (!made) {
    const taken = d1Execute(target, `SELECT 1 AS taken FROM users WHERE email = ${sqlText(email.data)}`).length > 0;
    throw taken ? new CliError(`--email: ${email.data} already belongs to a user of that database`) : operatorExists(target);
  }
  print(`Operator ${email.data} created in the ${target.where} database ${target.database}. Sign in at the console or with \`nearveil usage --email ${email.data}\`.`);
}

function operatorCount(target: D1Target): number {
  return Number(d1Execute(target, `SELECT count(*) AS n FROM users WHERE role = 'operator' AND disabled_at IS NULL`)[0]?.n ?? 0);
}

function operatorExists(target: D1Target): CliError {
  return new CliError(`operator init: the ${target.where} database ${target.database} already has an operator; sign in as that one and add others from the console`);
}

/** NEARVEIL_OPERATOR_PASSWORD, or a hidden prompt at a terminal; checked as the server checks new passwords. */
async function operatorPassword(): Promise<string> {
  let password = process.env.NEARVEIL_OPERATOR_PASSWORD;
  if (password === undefined || password === '') {
    if (!process.stdin.isTTY) {
      throw new CliError('operator init: set NEARVEIL_OPERATOR_PASSWORD, or run at a terminal to be asked (a password is never read from the command line, where others could see it)');
    }
    password = await promptHidden('Password for the operator: ');
    if ((await promptHidden('The same password again: ')) !== password) throw new CliError('operator init: the two passwords differ; nothing was written');
  }
  const checked = NewPasswordSchema.safeParse(password);
  if (!checked.success) throw new CliError(`operator password: ${checked.error.issues[0]?.message}`);
  return password;
}
