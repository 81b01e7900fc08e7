import { main } from '../../sdk/cli/main.ts';

/**
 * Runs the CLI in-process and collects what it prints; `env` is set for the call only (a value of
 * undefined removes the variable) and put back afterwards.
 */
export async function runCli(argv: string[], env: Record<string, string | undefined> = {}) {
  const saved = Object.fromEntries(Object.keys(env).map((k) => [k, process.env[k]]));
  const apply = (values: Record<string, string | undefined>) =>
    Object.entries(values).forEach(([k, v]) => (v === undefined ? delete process.env[k] : (process.env[k] = v)));
  apply(env);
  const out: string[] = [];
  const err: string[] = [];
  try {
    const code = await main(argv, (l) => out.push(l), (l) => err.push(l));
    return { code, out: out.join('\n'), err: err.join('\n') };
  } finally {
    apply(saved);
  }
}
