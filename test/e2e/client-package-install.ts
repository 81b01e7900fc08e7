import { spawnSync } from 'node:child_process';
import { copyFileSync, mkdirSync, mkdtempSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { ROOT } from '../product-server.ts';

export interface InstalledClientPackage {
  /** A fresh project with the packed tarball installed in node_modules/@nearveil/client. */
  project: string;
  tarball: string;
  /** The paths `npm pack --json` listed in the tarball. */
  packedFiles: string[];
  /** What `npm run build:client` printed (file sizes and the browser bundle's min+gzip). */
  buildLog: string;
  remove(): void;
}

function run(command: string, args: string[], cwd: string): string {
  const done = spawnSync(command, args, { cwd, encoding: 'utf8', timeout: 300_000, env: { ...process.env, npm_config_update_notifier: 'false' } });
  if (done.status !== 0) throw new Error(`${command} ${args.join(' ')} (in ${cwd}) failed with ${done.status}:\n${done.stdout}\n${done.stderr}`);
  return done.stdout;
}

/**
 * As an app developer would get the client: the package folder (packages/client) is copied to a
 * scratch folder and built there with `npm run build:client -- --package-dir` (so the checkout
 * stays clean), packed with `npm pack`, and the tarball installed into a new project with
 * `npm install <tarball>`. This machine has no network and npm's cache holds no usable metadata
 * for zod and @noble/hashes, so their folders are linked from the checkout's node_modules first
 * and npm installs the tarball offline with --no-save, taking the links as its dependencies:
 * offline it would stop at ENOTCACHED were the links not the exact versions the package names.
 */
export function buildPackAndInstall(): InstalledClientPackage {
  const scratch = mkdtempSync(join(tmpdir(), 'nearveil-client-package-'));
  try {
    const staging = join(scratch, 'package');
    mkdirSync(staging);
    for (const file of ['package.json', 'README.md']) copyFileSync(join(ROOT, 'packages', 'client', file), join(staging, file));
    const buildLog = run('npm', ['run', '--silent', 'build:client', '--', '--package-dir', staging], ROOT);
    // npm prints the prepack script's banner before the JSON.
    const packed = run('npm', ['pack', '--json', '--pack-destination', scratch], staging);
    const [info] = JSON.parse(packed.slice(packed.indexOf('\n[') + 1 || packed.indexOf('['))) as Array<{ filename: string; files: Array<{ path: string }> }>;
    const tarball = join(scratch, info!.filename);

    const project = installTarball(tarball, scratch);
    return { project, tarball, packedFiles: info!.files.map((f) => f.path), buildLog, remove: () => rmSync(scratch, { recursive: true, force: true }) };
  } catch (err) {
    rmSync(scratch, { recursive: true, force: true });
    throw err;
  }
}

/**
 * A new project in `scratch`/project with `tarball` installed as an app developer installs it
 * (`npm install <tarball>`), offline: the dependencies are linked from the checkout first (see
 * buildPackAndInstall). Returns the project folder.
 */
export function installTarball(tarball: string, scratch: string): string {
  const project = join(scratch, 'project');
  mkdirSync(join(project, 'node_modules', '@noble'), { recursive: true });
  writeFileSync(join(project, 'package.json'), JSON.stringify({ name: 'client-package-trial', version: '1.0.0', private: true, type: 'module' }, null, 2));
  symlinkSync(join(ROOT, 'node_modules', 'zod'), join(project, 'node_modules', 'zod'));
  symlinkSync(join(ROOT, 'node_modules', '@noble', 'hashes'), join(project, 'node_modules', '@noble', 'hashes'));
  run('npm', ['install', tarball, '--offline', '--no-save', '--no-audit', '--no-fund'], project);
  return project;
}
