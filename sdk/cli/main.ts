import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { InputError, type InputIssue } from '../../core/errors/input-error.ts';
import { NearveilError } from '../http.ts';
import { CliError } from './cli-error.ts';
import { datasetHints } from './dataset-suggestion.ts';
import { DATASET_HELP, datasetCommand } from './commands/dataset-lifecycle.ts';
import { FINDER_HELP, finderCommand } from './commands/finder.ts';
import { IMPORT_HELP, importCommand } from './commands/import.ts';
import { KEY_HELP, keyCommand } from './commands/keys.ts';
import { OPERATOR_HELP, operatorCommand } from './commands/operator.ts';
import { PLAN_HELP, planCommand } from './commands/plan.ts';
import { QUERY_HELP, queryCommand } from './commands/query.ts';
import { USAGE_HELP, usageCommand } from './commands/usage.ts';
import { publishCommand, rollbackCommand, VERSIONS_HELP, versionsCommand } from './commands/versions.ts';

const HELP = `nearveil: private nearest-site lookup

Commands:
${QUERY_HELP}

${IMPORT_HELP}

${PLAN_HELP}

${VERSIONS_HELP}

${DATASET_HELP}

${USAGE_HELP}

${KEY_HELP}

${FINDER_HELP}

${OPERATOR_HELP}

Defaults come from .nearveil/dev-credentials.json, written by the first \`npm start\`.`;

const commands: Record<string, (args: string[], print: (line: string) => void) => Promise<void>> = {
  query: queryCommand,
  import: importCommand,
  plan: planCommand,
  versions: versionsCommand,
  publish: publishCommand,
  rollback: rollbackCommand,
  dataset: datasetCommand,
  usage: usageCommand,
  key: keyCommand,
  finder: finderCommand,
  operator: operatorCommand,
};

const UNREACHABLE_HINT =
  'nearveil: is the server running? Start a local one with `npm start` in the nearveil checkout (it listens on http://127.0.0.1:8787), or name yours with --endpoint URL.';

/** The version in package.json, read where it sits beside sdk/ (the CLI runs from the checkout or the package). */
function packageVersion(): string {
  const path = fileURLToPath(new URL('../../package.json', import.meta.url));
  return (JSON.parse(readFileSync(path, 'utf8')) as { version: string }).version;
}

/** Runs one command; returns the exit code (0 ok, 1 refused by the server, 2 a usage mistake). */
export async function main(argv: string[], print = (line: string) => console.log(line), printError = (line: string) => console.error(line)): Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === 'help' || name === '--help' || name === '-h') {
    print(HELP);
    return 0;
  }
  if (name === '--version' || name === '-v' || name === 'version') {
    print(`nearveil ${packageVersion()}`);
    return 0;
  }
  const command = commands[name];
  if (!command) {
    printError(`nearveil: unknown command "${name}"; commands are ${Object.keys(commands).join(', ')} (see \`nearveil help\`)`);
    return 2;
  }
  try {
    await command(rest, print);
    return 0;
  } catch (err) {
    if (err instanceof CliError) {
      printError(`nearveil: ${err.message}`);
      return 2;
    }
    if (err instanceof NearveilError) {
      printError(`nearveil: ${err.message}${err.field ? ` (field: ${err.field})` : ''}${err.status ? ` [HTTP ${err.status} ${err.code}]` : ''}`);
      if (err.code === 'unreachable') printError(UNREACHABLE_HINT);
      const asked = flagValue(rest, '--dataset');
      if (err.code === 'dataset_unknown' && asked) {
        for (const line of await datasetHints(asked, { endpoint: flagValue(rest, '--endpoint'), token: flagValue(rest, '--token') })) printError(line);
      }
      printIssues(err.details, printError);
      return 1;
    }
    if (err instanceof InputError) {
      printError(`nearveil: ${err.message}`);
      printIssues(err.details, printError);
      return 2;
    }
    throw err;
  }
}

/** The value of `--flag VALUE` or `--flag=VALUE` in raw arguments, for messages after a failure. */
function flagValue(args: readonly string[], flag: string): string | undefined {
  for (let i = 0; i < args.length; i++) {
    if (args[i] === flag) return args[i + 1];
    if (args[i]!.startsWith(flag + '=')) return args[i]!.slice(flag.length + 1);
  }
  return undefined;
}

/** Lists the first problems of a larger input, spreadsheet row and column first. */
function printIssues(issues: readonly InputIssue[], printError: (line: string) => void): void {
  for (const issue of issues.slice(0, 10)) {
    const where = [issue.row === undefined ? '' : `row ${issue.row}`, issue.column ?? ''].filter(Boolean).join(', ');
    printError(`  ${where ? `${where}: ` : ''}${issue.message}`);
  }
  if (issues.length > 10) printError(`  ... and ${issues.length - 10} more listed by the server`);
}
