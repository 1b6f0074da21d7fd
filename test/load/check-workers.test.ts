/**
 * `check --workers N` against one thread on generated trees (test/load/corpus.ts): the report,
 * standard error and exit code must be the same byte for byte, whatever the number of workers.
 * A preload script counts the worker threads started, so a run that quietly stayed in one thread
 * fails; the same hook stands in a crashing worker or a tiny heap limit to show that a failed
 * worker ends the run with one line and exit code 2, not a hang.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join, relative } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CLI, describeCrash, ensureCliBuilt, removeTempDirs, tempDir, type CliRun } from '../adversarial/helpers';
import { writeCorpus, writeMonorepo } from './corpus';

let root: string;
let hook: string;
let log: string;
let pairedTraining: string;
let pairedSampling: string;

/** Replaces worker_threads.Worker before the bundle loads it: counts starts, and can swap the script or the heap limit. */
const HOOK = `'use strict';
const wt = require('node:worker_threads');
const fs = require('node:fs');
if (wt.isMainThread) {
  const Base = wt.Worker;
  wt.Worker = class extends Base {
    constructor(script, options) {
      const swapped = process.env.HOOK_SCRIPT || script;
      const heap = process.env.HOOK_HEAP_MB;
      super(swapped, heap ? { ...options, resourceLimits: { maxOldGenerationSizeMb: Number(heap) } } : options);
      fs.appendFileSync(process.env.HOOK_LOG, 'worker\\n');
    }
  };
}
`;

function run(args: string[], cwd: string, env: Record<string, string> = {}): CliRun & { workers: number } {
  writeFileSync(log, '');
  Object.assign(process.env, { HOOK_LOG: log, ...env });
  try {
    // No --max-old-space-size (runCli in ../adversarial sets one): node applies it to every
    // worker's heap in place of the worker's own limit.
    const r = spawnSync(process.execPath, ['--require', hook, CLI, ...args], {
      cwd,
      encoding: 'utf8',
      timeout: 120_000,
      killSignal: 'SIGKILL',
      maxBuffer: 256 * 1024 * 1024,
      env: { ...process.env, NO_COLOR: '1' },
    });
    const result = { status: r.status, signal: r.signal, stdout: r.stdout ?? '', stderr: r.stderr ?? '' };
    return { ...result, workers: readFileSync(log, 'utf8').split('\n').filter(Boolean).length };
  } finally {
    for (const k of ['HOOK_LOG', ...Object.keys(env)]) delete process.env[k];
  }
}

beforeAll(() => {
  ensureCliBuilt();
  root = tempDir('workers');
  hook = join(root, 'hook.cjs');
  log = join(root, 'workers.log');
  writeFileSync(hook, HOOK);
  // 900 configs in folders of 20, and a project file whose explicit pair crosses folders (and so
  // chunks), with one pair that leaves the project (a warning of the run).
  const corpus = join(root, 'corpus');
  const files = writeCorpus(corpus, 900).map((f) => relative(corpus, f.path));
  pairedTraining = files[0]!;
  pairedSampling = files[403]!;
  writeFileSync(
    join(corpus, 'noiselint.project.yaml'),
    [
      'pairs:',
      `  - training: ${pairedTraining}`,
      `    sampling: ${pairedSampling}`,
      `  - training: ${files[10]}`,
      '    sampling: ../elsewhere.yaml',
      '',
    ].join('\n'),
  );
  // A file the walk skips (binary) and one that is not valid UTF-8.
  mkdirSync(join(corpus, 'batch-0030'), { recursive: true });
  writeFileSync(join(corpus, 'batch-0030', 'blob.yaml'), Buffer.from([0x6e, 0x00, 0x01, 0x02]));
  writeFileSync(join(corpus, 'batch-0031', 'latin.yaml'), Buffer.from([0x23, 0xe9, 0x0a]));
  writeMonorepo(join(root, 'mono'), 1500);
}, 300_000);

afterAll(removeTempDirs);

describe('check in worker threads', () => {
  it.each([
    ['json', 'corpus'],
    ['text', 'corpus'],
    ['sarif', 'corpus'],
    ['json', 'mono'],
  ])('writes the same %s report as one thread on the %s tree', (format, tree) => {
    const cwd = join(root, tree);
    const one = run(['check', '.', '-f', format, '--workers', '1'], cwd);
    const three = run(['check', '.', '-f', format, '--workers', '3'], cwd);
    expect(describeCrash(one)).toBeNull();
    expect(describeCrash(three)).toBeNull();
    expect(one.workers).toBe(0);
    // Three threads: this one and two workers.
    expect(three.workers).toBe(2);
    expect(one.status).toBe(1);
    expect(three.status).toBe(one.status);
    expect(three.stderr).toBe(one.stderr);
    expect(three.stdout).toBe(one.stdout);
    if (format === 'json') {
      const report = JSON.parse(one.stdout) as {
        summary: { files: number; errors: number; passedOver: number };
        skipped: unknown[];
        files: { path: string; findings: { related?: { path: string }[] }[] }[];
      };
      expect(report.summary.errors).toBeGreaterThan(0);
      if (tree === 'corpus') {
        expect(report.summary.files).toBe(900);
        expect(report.skipped).toHaveLength(2);
        // The explicit pair across folders (and chunks) was paired: the sampling file's findings point at its training file.
        const sampling = report.files.find((f) => f.path === pairedSampling)!;
        expect(sampling.findings.flatMap((f) => (f.related ?? []).map((r) => r.path))).toContain(pairedTraining);
        expect(one.stderr).toContain('leaves the project folder');
      } else expect(report.summary.passedOver).toBeGreaterThan(1000);
    }
  });

  it('uses the available cores by default, and one thread for a small run', () => {
    // availableParallelism() threads, this one included.
    const many = run(['check', '.', '-f', 'json'], join(root, 'corpus'));
    expect(many.status).toBe(1);
    expect(many.workers).toBe(Math.min(availableParallelism(), 900 / 200) - 1);
    const small = run(['check', 'batch-0000', 'batch-0001', '-f', 'json', '--workers', '4'], join(root, 'corpus'));
    expect(small.status).toBe(1);
    expect(small.workers).toBe(0);
  });

  it('ends with one line and exit code 2 when a worker crashes', () => {
    const crash = join(root, 'crash.cjs');
    writeFileSync(crash, "require('node:worker_threads').parentPort.once('message', () => { throw new Error('boom in a worker'); });\n");
    const r = run(['check', '.', '-f', 'json', '--workers', '2'], join(root, 'corpus'), { HOOK_SCRIPT: crash });
    expect(r.signal).toBeNull();
    expect(r.status).toBe(2);
    expect(r.stderr.trim().split('\n')).toEqual([
      expect.stringMatching(/^noiselint check: a worker thread failed: boom in a worker while checking .*; --workers 1 checks in one thread$/),
    ]);
  });

  it('ends with one line and exit code 2 when a worker exits', () => {
    const exits = join(root, 'exits.cjs');
    writeFileSync(exits, "require('node:worker_threads').parentPort.once('message', () => process.exit(7));\n");
    const r = run(['check', '.', '-f', 'json', '--workers', '2'], join(root, 'corpus'), { HOOK_SCRIPT: exits });
    expect(r.status).toBe(2);
    expect(r.stderr.trim().split('\n')).toEqual([expect.stringMatching(/^noiselint check: a worker thread stopped \(exit code 7\)/)]);
  });

  it('ends with one line and exit code 2 when a worker runs out of its heap', () => {
    // A 2 MB explicit beta list (under the 5 MB file limit) is more than a 16 MB heap can parse.
    const betas = Array.from({ length: 150_000 }, (_, i) => `    - 0.0${1000 + i}`);
    writeFileSync(
      join(root, 'corpus', 'batch-0005', 'long-betas-train.yaml'),
      ['noise_scheduler:', '  num_train_timesteps: 1000', '  trained_betas:', ...betas, ''].join('\n'),
    );
    const r = run(['check', '.', '-f', 'json', '--workers', '2'], join(root, 'corpus'), { HOOK_HEAP_MB: '16' });
    expect(r.signal).toBeNull();
    expect(describeCrash(r)).toBeNull();
    expect(r.status).toBe(2);
    expect(r.stderr.trim().split('\n')).toEqual([
      expect.stringMatching(
        /^noiselint check: a worker thread ran out of memory \(its heap limit is \d+ MB\) while checking \d+ files from batch-0004\/.* to batch-000[5-9]\/.*; --workers 1 checks in one thread$/,
      ),
    ]);
  });
});
