import { connectAdmin } from '../../admin.ts';
import { signIn, signOut } from '../../session.ts';
import { SlugSchema } from '../../../core/naming/dataset-slug.ts';
import { CliError } from '../cli-error.ts';
import { connectionOptions, parseCommand, requireString, resolveConnection } from '../options.ts';

export const USAGE_HELP = `nearveil usage [--dataset SLUG] [--month YYYY-MM] [--tenant SLUG] [--email ADDRESS] [--json]
  Answered and refused queries, bytes in and out and server multiplications of a UTC month
  (default: this month), per day and in total. Refused queries are counted apart, never billed,
  and listed by reason (quota_exceeded, rate_limited, origin_not_allowed, ...) and key.
  --tenant SLUG      another tenant's usage (the operator only, signed in with --email)
  --email ADDRESS    sign in as this person (password from NEARVEIL_PASSWORD) instead of the admin token
  --json             print one object: month, the totals queries, rejected, bytesIn, bytesOut,
                     multiplications (also under "totals"), days, and refusals (by reason and key)
  NEARVEIL_ENDPOINT, NEARVEIL_TOKEN   override the dev credentials (the token is the tenant admin's)
  --endpoint URL, --token TOKEN       the same as flags (a token on a command line is visible to others: prefer the variable)`;

const MONTH = /^\d{4}-(0[1-9]|1[0-2])$/;

export async function usageCommand(args: string[], print: (line: string) => void): Promise<void> {
  const { values, positionals } = parseCommand('usage', args, {
    ...connectionOptions,
    dataset: { type: 'string' },
    month: { type: 'string' },
    tenant: { type: 'string' },
    email: { type: 'string' },
  });
  if (values.help) return print(USAGE_HELP);
  if (positionals.length > 0) throw new CliError(`usage: unexpected argument "${positionals[0]}" (see \`nearveil help\`)`);
  if (values.month !== undefined && !MONTH.test(values.month)) throw new CliError(`--month: expected YYYY-MM, got "${values.month}"`);
  for (const flag of ['dataset', 'tenant'] as const) {
    const value = values[flag];
    const slug = value === undefined ? undefined : SlugSchema.safeParse(value);
    if (slug && !slug.success) throw new CliError(`--${flag}: ${slug.error.issues[0]?.message}, got "${value}"`);
  }
  const conn = resolveConnection(values);
  const query = { tenant: values.tenant, dataset: values.dataset, month: values.month };
  const report = values.email === undefined ? await usageByToken(conn, query) : await usageSignedIn(conn.endpoint, values.email, query);
  if (values.json) {
    print(JSON.stringify({ tenant: report.tenant, dataset: report.dataset, month: report.month, ...report.totals, totals: report.totals, days: report.days, refusals: report.refusals }));
    return;
  }
  const t = report.totals;
  print(`Usage of ${report.tenant}${report.dataset ? ` / ${report.dataset}` : ''} in ${report.month} (UTC):`);
  print(`  ${t.queries} answered queries, ${t.rejected} refused (not billed)`);
  print(`  ${t.bytesIn} bytes in, ${t.bytesOut} bytes out, ${t.multiplications} server multiplications`);
  for (const d of report.days) print(`  ${d.day}: ${d.queries} answered, ${d.rejected} refused, ${d.bytesIn + d.bytesOut} bytes, ${d.multiplications} products`);
  if (report.refusals.length > 0) {
    print('  Refused, by reason and key:');
    for (const r of report.refusals) print(`    ${r.reason}: ${r.count} (key "${r.keyLabel}", ${r.keyId})`);
  }
}

type UsageQuery = Parameters<ReturnType<typeof connectAdmin>['usage']>[0];

function usageByToken(conn: { endpoint: string; token?: string }, query: UsageQuery) {
  const token = requireString(conn.token, '--token', 'set NEARVEIL_TOKEN to the tenant admin token, or run `npm start` once to write dev credentials');
  return connectAdmin({ endpoint: conn.endpoint, token }).usage(query);
}

/** As a signed-in person (the operator, for any tenant): the password comes from the environment, never the command line. */
async function usageSignedIn(endpoint: string, email: string, query: UsageQuery) {
  const password = process.env.NEARVEIL_PASSWORD;
  if (!password) throw new CliError('--email: set NEARVEIL_PASSWORD to the password of that account (it is never read from the command line, where others could see it)');
  const session = await signIn(endpoint, email, password);
  try {
    return await connectAdmin({ endpoint, session }).usage(query);
  } finally {
    await signOut(endpoint, session).catch(() => undefined);
  }
}
