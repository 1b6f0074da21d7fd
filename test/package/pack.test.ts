/**
 * `npm pack` makes an installable command-line package: the bundle inside, no runtime
 * dependencies, the license and changelog, the project-file schema; installed globally into a
 * temporary prefix it runs from a folder outside the checkout.
 */
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { VERSION } from '../../server/src/base/version';
import { removeTree } from '../workspace/helpers';
import { REPO_ROOT } from '../lsp/buildServer';
import { packAndInstall, type InstalledCli } from './installed';

let cli: InstalledCli;
beforeAll(() => {
  cli = packAndInstall();
}, 240_000);
afterAll(() => {
  if (cli && !process.env.NOISELINT_KEEP_TEMP) removeTree(cli.dir);
});

function tarList(tarball: string): string[] {
  const r = spawnSync('tar', ['-tzf', tarball], { encoding: 'utf8' });
  expect(r.status).toBe(0);
  return r.stdout.split('\n').filter(Boolean).sort();
}

function run(args: string[], cwd: string, input?: string) {
  return spawnSync(cli.bin, args, { cwd, env: cli.env, encoding: 'utf8', input, timeout: 60_000 });
}

describe('npm pack', () => {
  it('holds the bundle, the launcher, the schema and the documents, and nothing else', () => {
    expect(tarList(cli.tarball)).toEqual(
      [
        'package/CHANGELOG.md',
        'package/LICENSE',
        'package/README.md',
        'package/package.json',
        'package/schemas/noiselint.project.schema.json',
        'package/server/bin/noiselint.js',
        'package/server/dist/noiselint.js',
        'package/server/dist/checkWorker.js',
      ].sort(),
    );
  });

  it('declares bin, engines, license and repository, and no runtime dependencies', () => {
    const pkg = JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8'));
    expect(pkg.private).toBeUndefined();
    expect(pkg.bin).toEqual({ noiselint: 'server/bin/noiselint.js' });
    expect(pkg.engines.node).toBe('>=20');
    expect(pkg.license).toBe('MIT');
    expect(readFileSync(join(REPO_ROOT, 'LICENSE'), 'utf8')).toMatch(/^MIT License/);
    expect(pkg.repository.url).toMatch(/^git\+https:\/\//);
    expect(pkg.version).toBe(VERSION);
    expect(pkg.dependencies ?? {}).toEqual({});
    expect(pkg.optionalDependencies ?? {}).toEqual({});
    expect(pkg.peerDependencies ?? {}).toEqual({});
    // The changelog names the version being shipped.
    expect(readFileSync(join(REPO_ROOT, 'CHANGELOG.md'), 'utf8')).toContain(`## ${VERSION}`);
  });

  it('installs offline without warnings about the Node version', () => {
    expect(cli.installLog).not.toMatch(/EBADENGINE|Unsupported engine|npm warn/i);
    expect(cli.installLog).toMatch(/added 1 package/);
  });
});

describe('the installed command, outside the checkout', () => {
  it('answers --version and --help', () => {
    const version = run(['--version'], cli.dir);
    expect(version.stderr).toBe('');
    expect(version.stdout.trim()).toBe(VERSION);
    expect(version.status).toBe(0);
    const help = run(['check', '--help'], cli.dir);
    expect(help.status).toBe(0);
    expect(help.stdout).toMatch(/^Usage: noiselint check/m);
  });

  it('checks a config in a folder of its own and finds the leak', () => {
    const work = join(cli.dir, 'lanternfish-night');
    mkdirSync(work, { recursive: true });
    // Scaled linear 0.00085 -> 0.012, T = 1000: sqrt(abar_T) = 0.068 (Lin et al. 2023, Table 1, recalled from memory).
    writeFileSync(
      join(work, 'train.yaml'),
      'noise_scheduler:\n  num_train_timesteps: 1000\n  beta_schedule: scaled_linear\n  beta_start: 0.00085\n  beta_end: 0.012\n  prediction_type: v_prediction\n',
    );
    const r = run(['check', '--format', 'json'], work);
    expect(r.stderr).toBe('');
    const report = JSON.parse(r.stdout);
    expect(report.files[0].path).toBe('train.yaml');
    const leak = report.files[0].findings.find((f: { rule: string }) => f.rule === 'terminal-snr-leak');
    expect(leak.message).toMatch(/0\.068\b/);
    expect(r.status).toBe(0);
    const rules = run(['rules', 'terminal-snr-leak'], work);
    expect(rules.status).toBe(0);
    expect(rules.stdout).toMatch(/^terminal-snr-leak:/);
  });

  it('serves LSP on stdio: initialize answers with the server name', async () => {
    const child = spawn(cli.bin, ['lsp', '--stdio'], { cwd: cli.dir, env: cli.env, stdio: ['pipe', 'pipe', 'pipe'] });
    const frame = (m: object) => {
      const s = JSON.stringify(m);
      return `Content-Length: ${Buffer.byteLength(s)}\r\n\r\n${s}`;
    };
    let out = '';
    const answered = new Promise<void>((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`no initialize answer; got: ${out}`)), 30_000);
      child.stdout.on('data', (d: Buffer) => {
        out += d.toString('utf8');
        if (/"serverInfo"/.test(out)) {
          clearTimeout(timer);
          resolve();
        }
      });
    });
    child.stdin.write(frame({ jsonrpc: '2.0', id: 1, method: 'initialize', params: { processId: null, rootUri: null, capabilities: {} } }));
    await answered;
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    child.stdin.write(frame({ jsonrpc: '2.0', id: 2, method: 'shutdown' }));
    child.stdin.write(frame({ jsonrpc: '2.0', method: 'exit' }));
    expect(out).toMatch(new RegExp(`"serverInfo":\\{"name":"noiselint","version":"${VERSION.replace(/\./g, '\\.')}"\\}`));
    expect(await exited).toBe(0);
  });
});
