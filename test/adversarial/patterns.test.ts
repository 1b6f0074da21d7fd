/**
 * Glob and ignore patterns from an untrusted tree: many `*` or `**` (exponential for a
 * backtracking matcher), a 1 MiB .gitignore, patterns over the bounds. Each run ends in bounded
 * time with its findings, and a refused pattern is named in one line. The matcher itself agrees
 * with picomatch and node-ignore (general-purpose reference libraries) on ordinary patterns.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import ignore from 'ignore';
import picomatch from 'picomatch';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compileGlob, parseIgnore } from '../../server/src/workspace/glob';
import { describeCrash, ensureCliBuilt, removeTempDirs, runCli, tempDir } from './helpers';

/** A leading-spacing sampler (invented Lanternfish Pictures data): one finding at least. */
const CONFIG =
  'num_train_timesteps: 1000\nbeta_schedule: scaled_linear\nbeta_start: 0.00085\nbeta_end: 0.012\ntimestep_spacing: leading\nnum_inference_steps: 30\n';

describe('hostile patterns', () => {
  beforeAll(() => ensureCliBuilt());
  afterAll(removeTempDirs);

  it('a project include of *a*a*…*b against long names finishes with its findings', () => {
    const dir = tempDir('glob-stars');
    writeFileSync(join(dir, 'noiselint.project.yaml'), `include: ["${'*a'.repeat(30)}*b.yaml"]\n`);
    const long = `${'a'.repeat(80)}.yaml`;
    writeFileSync(join(dir, long), CONFIG);
    writeFileSync(join(dir, `${'a'.repeat(40)}b.yaml`), CONFIG);
    const r = runCli(['check', '.'], { cwd: dir, killAfterMs: 20_000 });
    expect(describeCrash(r), r.stderr).toBeNull();
    // The a…ab file matches (30 a's before the b), the all-a file does not.
    expect(r.stdout).toMatch(/a{40}b\.yaml:\d+:\d+/);
    expect(r.stdout).not.toContain(`${long}:`);
  });

  it('a .gitignore line a/**/a/**/…/b against a deep path finishes', () => {
    const dir = tempDir('glob-globstars');
    mkdirSync(join(dir, '.git'));
    const deep = join(dir, ...Array(30).fill('a'));
    mkdirSync(deep, { recursive: true });
    writeFileSync(join(deep, 'sampler.yaml'), CONFIG);
    writeFileSync(join(dir, '.gitignore'), `${Array(20).fill('a').join('/**/')}/**/b\n`);
    const r = runCli(['check', '.'], { cwd: dir, killAfterMs: 20_000 });
    expect(describeCrash(r), r.stderr).toBeNull();
    expect(r.stdout).toMatch(/sampler\.yaml:\d+:\d+/);
  });

  it('a 1 MiB .gitignore is used up to its pattern bound, with a one-line warning', () => {
    const dir = tempDir('glob-big-ignore');
    mkdirSync(join(dir, '.git'));
    const lines: string[] = ['skipped.yaml'];
    for (let i = 0, size = 0; size < 1024 * 1024 - 100; i++) {
      lines.push(`generated/${'*x'.repeat(8)}-${i}/**/*.tmp`);
      size += lines[lines.length - 1]!.length + 1;
    }
    writeFileSync(join(dir, '.gitignore'), lines.join('\n'));
    writeFileSync(join(dir, 'skipped.yaml'), CONFIG);
    for (let i = 0; i < 50; i++) writeFileSync(join(dir, `run-${i}.yaml`), CONFIG);
    const r = runCli(['check', '.'], { cwd: dir, killAfterMs: 20_000 });
    expect(describeCrash(r), r.stderr).toBeNull();
    expect(r.stdout).toMatch(/run-49\.yaml:/);
    expect(r.stdout).not.toMatch(/skipped\.yaml:/);
    const warnings = r.stderr.split('\n').filter((l) => l.includes('.gitignore'));
    expect(warnings, r.stderr).toHaveLength(1);
    expect(warnings[0]).toMatch(/noiselint check: warning: .*\.gitignore: only the first 1000 patterns are used/);
  });

  it('patterns over the bounds are refused in one line (project file, .gitignore, command line)', () => {
    const dir = tempDir('glob-refused');
    writeFileSync(join(dir, 'noiselint.project.yaml'), `exclude: ["${'*'.repeat(3)}${'?a'.repeat(100)}"]\n`);
    writeFileSync(join(dir, 'a.yaml'), CONFIG);
    const p = runCli(['check', '.'], { cwd: dir, killAfterMs: 20_000 });
    expect(describeCrash(p)).toBeNull();
    expect(p.status).toBe(2);
    expect(p.stderr.trim().split('\n')).toHaveLength(1);
    expect(p.stderr).toMatch(/exclude\[0\]: ".*…" is refused \(pattern has 103 wildcards; at most 64\)/);

    const g = tempDir('glob-refused-ignore');
    mkdirSync(join(g, '.git'));
    writeFileSync(join(g, '.gitignore'), `${'[ab]'.repeat(70)}\nignored.yaml\n`);
    writeFileSync(join(g, 'ignored.yaml'), CONFIG);
    writeFileSync(join(g, 'kept.yaml'), CONFIG);
    const i = runCli(['check', '.'], { cwd: g, killAfterMs: 20_000 });
    expect(describeCrash(i)).toBeNull();
    expect(i.stderr).toMatch(/\.gitignore:1: pattern refused: pattern has 70 wildcards; at most 64/);
    expect(i.stdout).toMatch(/kept\.yaml:/);
    expect(i.stdout).not.toMatch(/ignored\.yaml:/);

    const c = runCli(['check', `${'*'.repeat(65)}.yaml`], { cwd: g, killAfterMs: 20_000 });
    expect(describeCrash(c)).toBeNull();
    expect(c.stderr).toMatch(/glob refused: pattern has 65 wildcards/);
  });
});

describe('the matcher agrees with the reference libraries on ordinary patterns', () => {
  const paths = [
    'train.yaml',
    'configs/train.yaml',
    'configs/night/sampler.yml',
    'configs/.hidden/x.yaml',
    '.ci/run.yaml',
    'a/b/c/d.json',
    'runs/2024-06/a.jsonc',
    'runs/x.yaml.bak',
    'node/x.yaml',
    'ab.yaml',
    'abc.yaml',
    'a-b.yaml',
    'b.yaml',
  ];
  const globs = [
    '*.yaml',
    '**/*.yaml',
    'configs/**',
    'configs/*.yaml',
    '**/night/*',
    '{configs,runs}/**/*.{yaml,yml}',
    'a/**/d.json',
    '?b.yaml',
    '[ab]*.yaml',
    '[^a]*.yaml',
    'runs/*/a.jsonc',
    '**',
    'configs/**/*.yml',
    '**/.hidden/**',
    'a?c.yaml',
    '*-*.yaml',
  ];

  it.each([true, false])('globs, dot: %s (picomatch)', (dot) => {
    for (const g of globs) {
      const ours = compileGlob(g, { dot });
      const ref = picomatch(g, { dot });
      for (const p of paths) expect(ours(p), `${g} vs ${p}`).toBe(ref(p));
    }
  });

  it('.gitignore rules (node-ignore)', () => {
    const files = [
      ['*.bak'],
      ['configs/'],
      ['/train.yaml'],
      ['night'],
      ['runs/**/a.jsonc'],
      ['*.yaml', '!configs/*.yaml'],
      ['a/**/d.json'],
      ['.hidden'],
      ['configs/night/'],
      ['**/x.yaml'],
      ['# comment', '\\#x', 'b.yaml  '],
      ['*', '!*/', '!*.yml'],
    ];
    for (const lines of files) {
      const ours = parseIgnore(lines.join('\n'));
      const ref = ignore().add(lines.join('\n'));
      for (const p of paths) expect(ours.test(p).ignored, `${JSON.stringify(lines)} vs ${p}`).toBe(ref.ignores(p));
    }
  });
});
