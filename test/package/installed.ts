/**
 * Packs the repository as `npm pack` does and installs the tarball into a temporary global prefix
 * (`npm install -g --prefix`), offline: the package has no runtime dependencies to fetch. Tests then
 * run the installed `noiselint` from folders outside the checkout.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, realpathSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { REPO_ROOT, ensureServerBuilt } from '../lsp/buildServer';

export interface InstalledCli {
  /** Folder holding the prefix and the tarball; remove it when done. */
  dir: string;
  tarball: string;
  /** The `noiselint` command the install put on the prefix's PATH. */
  bin: string;
  binDir: string;
  /** What `npm install` printed (stdout and stderr). */
  installLog: string;
  /** The environment to run npm and the installed command with: the prefix's bin folder first on PATH. */
  env: NodeJS.ProcessEnv;
}

/** The environment without the npm_* variables of an enclosing `npm test` (they would steer npm). */
export function cleanEnv(): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = {};
  for (const [k, v] of Object.entries(process.env)) if (!/^npm_/i.test(k) || /^npm_config_cache$/i.test(k)) env[k] = v;
  return env;
}

export function packAndInstall(): InstalledCli {
  ensureServerBuilt();
  // The build writes the project-file schema next to the bundle; a bundle from elsewhere may lack it.
  if (!existsSync(join(REPO_ROOT, 'schemas/noiselint.project.schema.json'))) {
    execFileSync(process.execPath, ['scripts/build.mjs'], { cwd: REPO_ROOT, stdio: 'pipe' });
  }
  const dir = realpathSync(mkdtempSync(join(tmpdir(), 'noiselint-pack-')));
  const env = cleanEnv();
  const npm = (args: string[], cwd: string) =>
    execFileSync('npm', args, { cwd, env, encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'], timeout: 180_000 });
  // The bundle is already built; --ignore-scripts keeps `prepare` from rebuilding it under other tests.
  const packed = JSON.parse(npm(['pack', '--ignore-scripts', '--json', '--pack-destination', dir], REPO_ROOT)) as { filename: string }[];
  const tarball = join(dir, packed[0]!.filename);
  const prefix = join(dir, 'prefix');
  const install = spawnSync('npm', ['install', '-g', '--prefix', prefix, '--offline', '--no-audit', '--no-fund', tarball], {
    cwd: dir,
    env,
    encoding: 'utf8',
    timeout: 180_000,
  });
  const installLog = `${install.stdout ?? ''}${install.stderr ?? ''}`;
  if (install.status !== 0) throw new Error(`npm install -g ${tarball} failed (${install.status}):\n${installLog}`);
  const binDir = process.platform === 'win32' ? prefix : join(prefix, 'bin');
  return {
    dir,
    tarball,
    bin: join(binDir, process.platform === 'win32' ? 'noiselint.cmd' : 'noiselint'),
    binDir,
    installLog,
    env: { ...env, PATH: `${binDir}${process.platform === 'win32' ? ';' : ':'}${env.PATH ?? ''}` },
  };
}
