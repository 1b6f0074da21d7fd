/**
 * `noiselint fix` and the file system's sharper edges: an edit saved while the fix is written,
 * symlinks that point out of the checked tree, hard links, and links to special files whose
 * `stat` size is 0 but which never end.
 */
import { spawn } from 'node:child_process';
import { existsSync, linkSync, mkdirSync, readFileSync, readdirSync, statSync, symlinkSync, watch, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { linearBetaTexts, SMALL } from './configs';
import { CLI, describeCrash, ensureCliBuilt, removeTempDirs, runCli, tempDir } from '../adversarial/helpers';

/** Leading spacing and guidance without rescale on a zero-SNR schedule (invented Lanternfish Pictures data). */
/** SMALL with an explicit linear beta list (Ho et al. 2020 endpoints), so the write takes a while. */
function largeConfig(n = 5_000): string {
  const betas = linearBetaTexts(n);
  return SMALL.replace('num_train_timesteps: 1000', `num_train_timesteps: ${n}`).replace(
    /beta_schedule.*\nbeta_start.*\nbeta_end.*\n/,
    `trained_betas: [${betas.join(', ')}]\n`,
  );
}

/** Runs `fix --accept-retraining file` and, as soon as its temporary file appears, saves `edited` into the file. */
function fixWhileEditing(dir: string, name: string, edited: string): Promise<{ code: number | null; stderr: string; stdout: string; edits: number }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [CLI, 'fix', '--accept-retraining', name], { cwd: dir, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    let edits = 0;
    const watcher = watch(dir, (_event, file) => {
      if (edits > 0 || !file || !String(file).endsWith('.noiselint-tmp')) return;
      edits++;
      // What an editor does on save: truncate and write the same file.
      writeFileSync(join(dir, name), edited);
    });
    child.on('exit', (code) => {
      watcher.close();
      resolve({ code, stdout, stderr, edits });
    });
  });
}

describe('fix and the file system', () => {
  beforeAll(() => ensureCliBuilt());
  afterAll(removeTempDirs);

  it('an edit saved while the fix is being written is kept (never overwritten by the older fix)', { timeout: 120_000 }, async () => {
    const original = largeConfig();
    const outcomes: string[] = [];
    let edited = 0;
    for (let k = 0; k < 3; k++) {
      const dir = tempDir('fix-race');
      writeFileSync(join(dir, 'long.yaml'), original);
      const mine = original.replace('guidance_scale: 7.5', `guidance_scale: ${5 + k} # edited while fixing`);
      const r = await fixWhileEditing(dir, 'long.yaml', mine);
      const now = readFileSync(join(dir, 'long.yaml'), 'utf8');
      outcomes.push(
        `run ${k}: exit ${r.code}, edits ${r.edits}, file ${now === mine ? 'edited' : now === original ? 'ORIGINAL' : 'FIXED (edit lost)'}: ${r.stderr.trim()}`,
      );
      if (r.edits > 0) edited++;
      expect(now, outcomes.join('\n')).toBe(mine);
      for (const n of readdirSync(dir)) expect(n, outcomes.join('\n')).toBe('long.yaml');
    }
    expect(edited).toBe(3);
  });

  it('fix of a folder does not write through a symlink to a file outside it, and says so in one line', () => {
    const dir = tempDir('fix-escape');
    mkdirSync(join(dir, 'checked'));
    mkdirSync(join(dir, 'elsewhere'));
    const outside = join(dir, 'elsewhere', 'shared.yaml');
    writeFileSync(outside, SMALL);
    symlinkSync('../elsewhere/shared.yaml', join(dir, 'checked', 'sampler.yaml'));
    writeFileSync(join(dir, 'checked', 'own.yaml'), SMALL);
    const r = runCli(['fix', '--accept-retraining', 'checked'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    expect(readFileSync(outside, 'utf8')).toBe(SMALL);
    expect(readFileSync(join(dir, 'checked', 'own.yaml'), 'utf8')).toContain('trailing');
    const lines = r.stderr.split('\n').filter((l) => l.includes('sampler.yaml'));
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^checked\/sampler\.yaml: not written: it links to elsewhere\/shared\.yaml, outside the checked folders/);
    expect(r.status).toBe(1);
  });

  it('a symlink named on the command line is written through', () => {
    const dir = tempDir('fix-explicit-link');
    mkdirSync(join(dir, 'elsewhere'));
    writeFileSync(join(dir, 'elsewhere', 'shared.yaml'), SMALL);
    mkdirSync(join(dir, 'checked'));
    symlinkSync('../elsewhere/shared.yaml', join(dir, 'checked', 'sampler.yaml'));
    const r = runCli(['fix', '--accept-retraining', 'checked/sampler.yaml'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    expect(r.status).toBe(0);
    expect(readFileSync(join(dir, 'elsewhere', 'shared.yaml'), 'utf8')).toContain('trailing');
  });

  it('inside a project, a link to a file outside the project folder is not written', () => {
    const dir = tempDir('fix-project-escape');
    mkdirSync(join(dir, 'project', 'configs'), { recursive: true });
    writeFileSync(join(dir, 'project', 'noiselint.project.yaml'), 'include: ["**/*.yaml"]\n');
    writeFileSync(join(dir, 'stray.yaml'), SMALL);
    symlinkSync('../../stray.yaml', join(dir, 'project', 'configs', 'link.yaml'));
    // The checked folder (the parent) contains the target, the project does not.
    const r = runCli(['fix', '--accept-retraining', '.'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    expect(r.stderr).toMatch(/project\/configs\/link\.yaml: not written: it links to stray\.yaml, outside the project folder/);
    // stray.yaml itself is in the checked folder and fixed on its own; the link did not write it twice.
    expect(r.stdout).not.toMatch(/link\.yaml: applied/);
  });

  it('a hard-linked file is fixed in place: every name sees the fix, the link is kept, nothing left behind', () => {
    const dir = tempDir('fix-hardlink');
    writeFileSync(join(dir, 'stills.yaml'), SMALL);
    mkdirSync(join(dir, 'archive'));
    linkSync(join(dir, 'stills.yaml'), join(dir, 'archive', 'stills-copy.yaml'));
    const inode = statSync(join(dir, 'stills.yaml')).ino;
    const r = runCli(['fix', '--accept-retraining', 'stills.yaml'], { cwd: dir });
    expect(describeCrash(r)).toBeNull();
    expect(r.status).toBe(0);
    const a = readFileSync(join(dir, 'stills.yaml'), 'utf8');
    expect(a).toContain('trailing');
    expect(readFileSync(join(dir, 'archive', 'stills-copy.yaml'), 'utf8')).toBe(a);
    expect(statSync(join(dir, 'stills.yaml')).ino).toBe(inode);
    expect(statSync(join(dir, 'stills.yaml')).nlink).toBe(2);
    expect(readdirSync(dir).sort()).toEqual(['archive', 'stills.yaml']);
  });

  const pagemap = '/proc/self/pagemap';
  it.skipIf(!existsSync(pagemap))('a config or project file linked to a zero-size endless special file is read only up to the size limit', () => {
    expect(statSync(pagemap).size).toBe(0);
    const dir = tempDir('endless');
    symlinkSync(pagemap, join(dir, 'train.yaml'));
    writeFileSync(join(dir, 'own.yaml'), SMALL);
    const r = runCli(['check', '.'], { cwd: dir, heapMb: 128, killAfterMs: 30_000 });
    expect(describeCrash(r), r.stderr).toBeNull();
    expect(r.stderr).toMatch(/train\.yaml: skipped: above the 5\.0 MB limit/);
    expect(r.stdout).toMatch(/own\.yaml:/);

    const proj = tempDir('endless-project');
    writeFileSync(join(proj, 'train.yaml'), SMALL);
    symlinkSync(pagemap, join(proj, 'noiselint.project.yaml'));
    const p = runCli(['check', '.'], { cwd: proj, heapMb: 128, killAfterMs: 30_000 });
    expect(describeCrash(p), p.stderr).toBeNull();
    expect(p.status).toBe(2);
    expect(p.stderr.trim().split('\n')).toHaveLength(1);
    expect(p.stderr).toMatch(/noiselint\.project\.yaml/);
  });
});
