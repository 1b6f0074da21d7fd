/**
 * `noiselint fix` end to end through main(), on temporary copies of Lanternfish Pictures configs.
 */
import { chmodSync, mkdtempSync, readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../server/src/cli/main';
import type { CliIO } from '../../server/src/cli/io';

const NIGHT = [
  '# Lanternfish Pictures: night storyboard fine-tune (invented demo data)',
  'scheduler:',
  '  num_train_timesteps: 1000',
  '  beta_schedule: scaled_linear   # latent default',
  '  beta_start: 0.00085',
  '  beta_end: 0.012',
  '  prediction_type: epsilon',
  'training:',
  '  noise_offset: 0.1   # brighter blacks, old trick',
  '  learning_rate: 1.0e-5',
  'sampling:',
  '  timestep_spacing: leading',
  '  num_inference_steps: 30',
  '  guidance_scale: 7.5',
  '',
].join('\n');

async function run(cwd: string, ...args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '';
  let stderr = '';
  const io: CliIO = { cwd, stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), isTTY: false, env: {} };
  const code = await main(['fix', ...args], io);
  return { code, stdout, stderr };
}

function project(files: Record<string, string>): string {
  const dir = mkdtempSync(join(tmpdir(), 'noiselint-fix-'));
  for (const [name, text] of Object.entries(files)) writeFileSync(join(dir, name), text);
  return dir;
}

describe('noiselint fix', () => {
  it('--dry-run prints a unified diff and leaves the file alone', async () => {
    const dir = project({ 'night.yaml': NIGHT });
    const before = statSync(join(dir, 'night.yaml')).mtimeMs;
    const r = await run(dir, '--dry-run', 'night.yaml');
    // Changes are pending: a dry run gates a build with exit code 1.
    expect(r.code).toBe(1);
    expect(r.stdout).toContain('--- a/night.yaml');
    expect(r.stdout).toContain('+++ b/night.yaml');
    expect(r.stdout).toMatch(/^- {2}timestep_spacing: leading$/m);
    expect(r.stdout).toMatch(/^\+ {2}timestep_spacing: trailing$/m);
    // Only the sampling-only fix: the schedule and target stay as they are without --accept-retraining.
    expect(r.stdout).not.toMatch(/^\+.*rescale_betas_zero_snr/m);
    expect(r.stderr).toMatch(/would apply 1 fix/);
    expect(r.stderr).toMatch(
      /2 more findings have fixes that change what the model learns \(the checkpoint then needs fine-tuning or retraining\); add --accept-retraining to apply them\./,
    );
    expect(r.stderr).not.toMatch(/unsafe/);
    expect(readFileSync(join(dir, 'night.yaml'), 'utf8')).toBe(NIGHT);
    expect(statSync(join(dir, 'night.yaml')).mtimeMs).toBe(before);
  });

  it('writes the sampling-only fix, keeps mode and CRLF, and a second run changes nothing', async () => {
    const crlf = NIGHT.replace(/\n/g, '\r\n');
    const dir = project({ 'night.yaml': crlf });
    const file = join(dir, 'night.yaml');
    chmodSync(file, 0o640);
    const r = await run(dir, 'night.yaml');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/night\.yaml: applied 1 fix \(sampler-skips-last-step\)/);
    const fixed = readFileSync(file, 'utf8');
    expect(fixed).toBe(crlf.replace('timestep_spacing: leading', 'timestep_spacing: trailing'));
    expect(statSync(file).mode & 0o777).toBe(0o640);
    expect(readdirSync(dir)).toEqual(['night.yaml']);
    const again = await run(dir, 'night.yaml');
    expect(again.code).toBe(0);
    expect(again.stdout).toMatch(/Applied 0 fixes in 0 files/);
    expect(readFileSync(file, 'utf8')).toBe(fixed);
  });

  it('--accept-retraining holds back a fix that would rewrite a comment and says which flag lets it through', async () => {
    const dir = project({ 'night.yaml': NIGHT });
    const r = await run(dir, '--accept-retraining', 'night.yaml');
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('1 more finding has a fix that would rewrite a comment you wrote; add --accept-comment-edits to apply it.');
    expect(r.stdout).not.toMatch(/add --accept-retraining/);
    const fixed = readFileSync(join(dir, 'night.yaml'), 'utf8');
    expect(fixed).toContain('  rescale_betas_zero_snr: true\n');
    expect(fixed).toContain('  noise_offset: 0.1   # brighter blacks, old trick\n');
  });

  it('--accept-retraining with --accept-comment-edits applies every fix, keeps comments it does not remove, and is idempotent', async () => {
    const dir = project({ 'night.yaml': NIGHT });
    const file = join(dir, 'night.yaml');
    const r = await run(dir, '--accept-retraining', '--accept-comment-edits', 'night.yaml');
    expect(r.code).toBe(0);
    expect(r.stdout).not.toMatch(/more finding/);
    const fixed = readFileSync(file, 'utf8');
    expect(fixed).toContain('  rescale_betas_zero_snr: true\n');
    expect(fixed).toContain('  prediction_type: v_prediction\n');
    expect(fixed).toContain('  timestep_spacing: trailing\n');
    expect(fixed).toContain('  guidance_rescale: 0.7\n');
    expect(fixed).toContain('# Lanternfish Pictures: night storyboard fine-tune (invented demo data)\n');
    expect(fixed).toContain('  beta_schedule: scaled_linear   # latent default\n');
    const again = await run(dir, '--accept-retraining', '--accept-comment-edits', 'night.yaml');
    expect(again.code).toBe(0);
    expect(readFileSync(file, 'utf8')).toBe(fixed);
  });

  it('fixes JSON and keeps a BOM', async () => {
    const json =
      '\uFEFF{\n  "num_train_timesteps": 1000,\n  "beta_schedule": "scaled_linear",\n  "rescale_betas_zero_snr": true,\n  "prediction_type": "v_prediction",\n  "timestep_spacing": "leading",\n  "num_inference_steps": 25\n}\n';
    const dir = project({ 'stills.json': json });
    const r = await run(dir, '.');
    expect(r.code).toBe(0);
    const fixed = readFileSync(join(dir, 'stills.json'), 'utf8');
    expect(fixed).toBe(json.replace('"leading"', '"trailing"'));
  });

  it('a file that does not parse is reported in one line and never written', async () => {
    const broken = 'num_train_timesteps: 1000\ntimestep_spacing: [leading\nnum_inference_steps: 30\n';
    const dir = project({ 'broken.yaml': broken, 'night.yaml': NIGHT });
    const r = await run(dir, '.');
    expect(r.code).toBe(1);
    const lines = r.stderr.split('\n').filter((l) => l.includes('broken.yaml'));
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^broken\.yaml:\d+:\d+: not fixed: the file does not parse/);
    expect(readFileSync(join(dir, 'broken.yaml'), 'utf8')).toBe(broken);
    // The other file is still fixed.
    expect(readFileSync(join(dir, 'night.yaml'), 'utf8')).toContain('timestep_spacing: trailing');
  });

  it('a broken file that is not a diffusion config is skipped quietly', async () => {
    const other = '{"name": "lanternfish-storyboard-tools",\n';
    const dir = project({ 'package.json': other, 'night.yaml': NIGHT });
    const r = await run(dir, '.');
    expect(r.code).toBe(0);
    expect(r.stderr).not.toMatch(/package\.json/);
    expect(readFileSync(join(dir, 'package.json'), 'utf8')).toBe(other);
  });

  it('a read-only file is reported and left alone (even for the superuser)', async () => {
    const dir = project({ 'night.yaml': NIGHT });
    const file = join(dir, 'night.yaml');
    chmodSync(file, 0o444);
    const r = await run(dir, 'night.yaml');
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/night\.yaml: not written: the file is read-only/);
    expect(readFileSync(file, 'utf8')).toBe(NIGHT);
    expect(statSync(file).mode & 0o777).toBe(0o444);
    expect(readdirSync(dir)).toEqual(['night.yaml']);
  });

  it('usage and missing inputs exit 2', async () => {
    const dir = project({ 'night.yaml': NIGHT });
    expect((await run(dir, '--bogus')).code).toBe(2);
    const missing = await run(dir, 'nowhere.yaml');
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/nowhere\.yaml/);
  });
});
