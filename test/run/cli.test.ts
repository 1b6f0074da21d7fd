/** `noiselint rescale-run` on a real folder: diff and numbers first, writing only when asked. */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../cli/check-helpers';
import { useTempTrees } from '../workspace/helpers';
import { RUN_PAIRS } from './pairs';

const tree = useTempTrees();
const yaml = RUN_PAIRS[0]!;

describe('noiselint rescale-run', () => {
  it('prints one diff across the run, the before/after table and the cautions, and writes nothing', async () => {
    const root = tree({ 'night/train-ft.yaml': yaml.train, 'night/sample-ft.yaml': yaml.sample });
    const r = await runCli(['rescale-run', 'night/sample-ft.yaml'], root);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('--- a/night/train-ft.yaml');
    expect(r.stdout).toContain('--- a/night/sample-ft.yaml');
    expect(r.stdout).toContain('+  rescale_betas_zero_snr: true');
    expect(r.stdout).toContain("-  timestep_spacing: leading   # the preview job's default");
    expect(r.stdout).toContain("+  timestep_spacing: trailing   # the preview job's default");
    // The table: terminal SNR 0.004682 -> 0 (Lin et al. 2023, Table 1 and Algorithm 1); leading with
    // 30 steps and offset 1 starts at 29 * floor(1000 / 30) + 1 = 958 (DESIGN section 4), trailing at 999.
    expect(r.stdout).toMatch(/terminal SNR \(SNR_T\)\s+0\.004682\s+0\n/);
    expect(r.stdout).toMatch(/first sampled timestep\s+958\s+999\n/);
    expect(r.stdout).toMatch(/guidance rescale\s+0\s+0\.7\n/);
    expect(r.stdout).toContain('Afterwards check reports none of the fixed rules and no mismatch between the files.');
    expect(r.stdout).toContain('must be fine-tuned after the schedule or target change (Lin et al. 2023');
    expect(r.stderr).toBe('noiselint rescale-run: nothing written (add --write to apply)\n');
    expect(readFileSync(join(root, 'night/train-ft.yaml'), 'utf8')).toBe(yaml.train);
  });

  it('writes a change to what the model learns only with --accept-retraining; then check is clean of the fixed rules', async () => {
    const root = tree({ 'night/train-ft.yaml': yaml.train, 'night/sample-ft.yaml': yaml.sample });
    const refused = await runCli(['rescale-run', 'night/train-ft.yaml', '--write'], root);
    expect(refused.code).toBe(1);
    expect(refused.stderr).toContain('add --accept-retraining, or --sampling-only');
    expect(readFileSync(join(root, 'night/train-ft.yaml'), 'utf8')).toBe(yaml.train);

    const written = await runCli(['rescale-run', 'night/train-ft.yaml', '--write', '--accept-retraining'], root);
    expect(written.code).toBe(0);
    expect(written.stderr).toContain('night/train-ft.yaml: written');
    expect(written.stderr).toContain('night/sample-ft.yaml: written');
    const check = await runCli(['check', 'night', '--format', 'json'], root);
    const rules = JSON.parse(check.stdout).files.flatMap((f: { findings: { rule: string }[] }) => f.findings.map((x) => x.rule));
    expect(rules).toEqual([]);
    const again = await runCli(['rescale-run', 'night/train-ft.yaml', '--write', '--accept-retraining'], root);
    expect(again.stdout).toMatch(/^Nothing to change in the run of night\/train-ft\.yaml \(2 files\)/);
    expect(again.stderr).toBe('');
  });

  it('--sampling-only writes without consent and leaves the training file alone', async () => {
    const root = tree({ 'night/train-ft.yaml': yaml.train, 'night/sample-ft.yaml': yaml.sample });
    const r = await runCli(['rescale-run', 'night/sample-ft.yaml', '--sampling-only', '--write'], root);
    expect(r.code).toBe(0);
    expect(readFileSync(join(root, 'night/train-ft.yaml'), 'utf8')).toBe(yaml.train);
    const sample = readFileSync(join(root, 'night/sample-ft.yaml'), 'utf8');
    expect(sample).toContain('timestep_spacing: trailing');
    expect(sample).toContain('guidance_rescale: 0.7');
    expect(sample).toContain('# Lanternfish Pictures: preview sampler for ft-015');
  });

  it('one line and exit 2 for a missing file or no file', async () => {
    const root = tree({ 'a.yaml': 'x: 1\n' });
    const missing = await runCli(['rescale-run', 'nope.yaml'], root);
    expect(missing.code).toBe(2);
    expect(missing.stderr.trim().split('\n')).toHaveLength(1);
    const none = await runCli(['rescale-run'], root);
    expect(none.code).toBe(2);
    expect(none.stderr).toBe('noiselint rescale-run: name a training or sampling file: noiselint rescale-run <file...>\n');
  });

  it('a scheduler class with no working rescale: says what to change instead, writes nothing, exit 0', async () => {
    const config = JSON.stringify({
      _class_name: 'PNDMScheduler',
      _diffusers_version: '0.30.3',
      beta_end: 0.012,
      beta_schedule: 'scaled_linear',
      beta_start: 0.00085,
      num_train_timesteps: 1000,
      skip_prk_steps: true,
      steps_offset: 1,
    });
    const root = tree({ 'stills/scheduler/scheduler_config.json': config });
    const r = await runCli(['rescale-run', 'stills/scheduler/scheduler_config.json', '--write', '--accept-retraining'], root);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^Nothing this operation can write in the stills\/scheduler\/scheduler_config\.json/);
    expect(r.stdout).toContain('PNDMScheduler has no zero-SNR rescale: use a class that takes rescale_betas_zero_snr');
    expect(r.stderr).not.toContain('cannot be written');
    expect(readFileSync(join(root, 'stills/scheduler/scheduler_config.json'), 'utf8')).toBe(config);
  });
});
