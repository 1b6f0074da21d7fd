/**
 * `noiselint fix` never loses data: killed with SIGKILL at random moments while it rewrites a
 * large file, the file is either the original or the fully fixed text, never a truncated mix, and
 * anything left behind is a clearly named temporary file. Permissions, CRLF endings, a BOM and
 * symlinks are kept; read-only files are reported and not touched.
 */
import { spawn } from 'node:child_process';
import { watch } from 'node:fs';
import { chmodSync, copyFileSync, lstatSync, readFileSync, readdirSync, readlinkSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { linearBetaTexts, SMALL } from './configs';
import { CLI, describeCrash, ensureCliBuilt, runCli, removeTempDirs, tempDir } from '../adversarial/helpers';

/**
 * Explicit linear betas (Ho et al. 2020 endpoints 1e-4 -> 0.02) stretched to T = n. 10,000 keeps
 * each fix run to a few seconds on a shared 2-core machine (NOISELINT_KILL_BETAS raises it).
 */
function bigConfig(): string {
  const n = Number(process.env.NOISELINT_KILL_BETAS ?? 10_000);
  const betas = linearBetaTexts(n);
  return [
    '# Lanternfish Pictures: long-schedule experiment (invented demo data)',
    `num_train_timesteps: ${n}`,
    'prediction_type: v_prediction',
    'timestep_spacing: leading',
    'num_inference_steps: 50',
    'guidance_scale: 7.5',
    `trained_betas: [${betas.join(', ')}]`,
    '',
  ].join('\n');
}

/** Deterministic delays (a 32-bit LCG) so that a failing sequence can be re-run. */
function* delays(seed: number, maxMs: number): Generator<number> {
  let x = seed >>> 0;
  for (;;) {
    x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
    yield Math.floor((x / 0x100000000) * maxMs);
  }
}

/**
 * Runs `fix --accept-retraining --accept-comment-edits file` in `cwd` and kills it with SIGKILL: `afterWriteStartsMs` after the
 * temporary file appears (the write window), or, when that is null, `fallbackMs` after spawning.
 */
function runFixAndKill(
  cwd: string,
  file: string,
  afterWriteStartsMs: number | null,
  fallbackMs: number,
): Promise<{ code: number | null; signal: NodeJS.Signals | null; sawTemp: boolean }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [CLI, 'fix', '--accept-retraining', '--accept-comment-edits', file], { cwd, stdio: 'ignore' });
    let sawTemp = false;
    const kill = () => child.kill('SIGKILL');
    const watcher = watch(cwd, (_event, name) => {
      if (sawTemp || !name || !String(name).endsWith('.noiselint-tmp')) return;
      sawTemp = true;
      if (afterWriteStartsMs !== null) setTimeout(kill, afterWriteStartsMs);
    });
    const timer = setTimeout(kill, afterWriteStartsMs === null ? fallbackMs : 120_000);
    child.on('exit', (code, signal) => {
      clearTimeout(timer);
      watcher.close();
      resolve({ code, signal, sawTemp });
    });
  });
}

describe('fix safety', () => {
  afterAll(removeTempDirs);
  beforeAll(() => ensureCliBuilt());

  it('SIGKILL during a large rewrite leaves the original or the fully fixed file, never a partial one', { timeout: 180_000 }, async () => {
    const original = Buffer.from(bigConfig());
    const refDir = tempDir('fix-ref');
    writeFileSync(join(refDir, 'long.yaml'), original);
    const started = performance.now();
    const ref = runCli(['fix', '--accept-retraining', '--accept-comment-edits', 'long.yaml'], { cwd: refDir, heapMb: 512 });
    const fullMs = performance.now() - started;
    expect(describeCrash(ref), ref.stderr).toBeNull();
    const fixed = readFileSync(join(refDir, 'long.yaml'));
    // The run really rewrites the file (otherwise the kill test would prove nothing).
    expect(fixed.equals(original), `fix changed nothing:\n${ref.stdout}${ref.stderr}`).toBe(false);

    const seed = Number(process.env.NOISELINT_KILL_SEED ?? 20240611);
    const writeDelays = delays(seed, 4);
    const anyDelays = delays(seed + 1, Math.max(50, fullMs * 1.1));
    const outcomes: string[] = [];
    const runs = Number(process.env.NOISELINT_KILL_RUNS ?? 4);
    let killedInWrite = 0;
    for (let k = 0; k < runs; k++) {
      const dir = tempDir('fix-kill');
      const file = join(dir, 'long.yaml');
      writeFileSync(file, original);
      chmodSync(file, 0o640);
      // Most kills land in the write window (just after the temporary file appears); every
      // third lands anywhere in the run.
      const inWrite = k % 3 !== 2;
      const ms = (inWrite ? writeDelays : anyDelays).next().value as number;
      const r = await runFixAndKill(dir, 'long.yaml', inWrite ? ms : null, ms);
      const now = readFileSync(file);
      const state = now.equals(original) ? 'original' : now.equals(fixed) ? 'fixed' : 'PARTIAL';
      const leftovers = readdirSync(dir).filter((n) => n !== 'long.yaml');
      if (inWrite && r.sawTemp && r.signal) killedInWrite++;
      outcomes.push(
        `kill ${inWrite ? `${ms} ms after the write began` : `${ms} ms after start`} (seed ${seed}): ` +
          `${r.signal ?? `exit ${r.code}`}, file ${state}, leftovers [${leftovers.join(', ')}]`,
      );
      expect(state, outcomes.join('\n')).not.toBe('PARTIAL');
      // Anything left behind is clearly named as ours (and hidden).
      for (const name of leftovers) expect(name, outcomes.join('\n')).toMatch(/^\..*\.noiselint-tmp$/);
      expect(statSync(file).mode & 0o777).toBe(0o640);
    }
    // The test only proves something if some kills really hit the write.
    expect(killedInWrite, outcomes.join('\n')).toBeGreaterThan(0);
    console.log(`fix kill test (full run ${fullMs.toFixed(0)} ms):\n  ${outcomes.join('\n  ')}`);
  });

  it('keeps the file mode (0640) and owner', () => {
    const dir = tempDir('fix-mode');
    const file = join(dir, 'stills.yaml');
    writeFileSync(file, SMALL);
    chmodSync(file, 0o640);
    const before = statSync(file);
    const r = runCli(['fix', '--accept-retraining', '--accept-comment-edits', 'stills.yaml'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    const after = statSync(file);
    expect(readFileSync(file, 'utf8')).not.toBe(SMALL);
    expect(readFileSync(file, 'utf8')).toContain('trailing');
    expect(after.mode & 0o7777).toBe(0o640);
    expect([after.uid, after.gid]).toEqual([before.uid, before.gid]);
    expect(readdirSync(dir)).toEqual(['stills.yaml']);
  });

  it('keeps CRLF line endings and a BOM', () => {
    const dir = tempDir('fix-crlf');
    const file = join(dir, 'stills.yaml');
    const text = '\ufeff' + SMALL.replace(/\n/g, '\r\n');
    writeFileSync(file, text);
    const r = runCli(['fix', '--accept-retraining', '--accept-comment-edits', 'stills.yaml'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    const out = readFileSync(file, 'utf8');
    expect(out).not.toBe(text);
    expect(out.startsWith('\ufeff')).toBe(true);
    expect(out).not.toMatch(/(^|[^\r])\n/);
    expect(out.split('\r\n').length).toBeGreaterThanOrEqual(text.split('\r\n').length);
  });

  it('a read-only file is reported and left alone (even for the superuser)', () => {
    const dir = tempDir('fix-ro');
    const file = join(dir, 'stills.yaml');
    writeFileSync(file, SMALL);
    chmodSync(file, 0o444);
    const r = runCli(['fix', '--accept-retraining', '--accept-comment-edits', 'stills.yaml'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/read-only/);
    expect(readFileSync(file, 'utf8')).toBe(SMALL);
    expect(statSync(file).mode & 0o777).toBe(0o444);
    expect(readdirSync(dir)).toEqual(['stills.yaml']);
  });

  it('fixing through a symlink rewrites the target and keeps the link', () => {
    const dir = tempDir('fix-link');
    const target = join(dir, 'real.yaml');
    writeFileSync(target, SMALL);
    symlinkSync('real.yaml', join(dir, 'link.yaml'));
    const r = runCli(['fix', '--accept-retraining', '--accept-comment-edits', 'link.yaml'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    expect(lstatSync(join(dir, 'link.yaml')).isSymbolicLink()).toBe(true);
    expect(readlinkSync(join(dir, 'link.yaml'))).toBe('real.yaml');
    expect(readFileSync(target, 'utf8')).toContain('trailing');
  });

  it('--dry-run writes nothing', () => {
    const dir = tempDir('fix-dry');
    const file = join(dir, 'stills.yaml');
    writeFileSync(file, SMALL);
    const copy = join(dir, 'copy.yaml.bak');
    copyFileSync(file, copy);
    const before = statSync(file).mtimeMs;
    const r = runCli(['fix', '--accept-retraining', '--accept-comment-edits', '--dry-run', 'stills.yaml'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    expect(r.stdout).toMatch(/^\+.*trailing/m);
    expect(readFileSync(file, 'utf8')).toBe(SMALL);
    expect(statSync(file).mtimeMs).toBe(before);
  });
});
