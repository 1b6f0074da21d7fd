/**
 * .pre-commit-hooks.yaml with the real pre-commit from Debian, offline: a copy of this repository
 * becomes a local git repository that a project's .pre-commit-config.yaml points at; pre-commit
 * installs the hooks the way it installs any node hook (npm install, npm pack, npm install -g,
 * every package from the npm cache) and runs them on staged configs.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, realpathSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { REPO_ROOT } from '../lsp/buildServer';
import { removeTree } from '../workspace/helpers';
import { ensureDebianTool } from './debian-tool';
import { cleanEnv } from './installed';

const tool = ensureDebianTool('pre-commit', 'pre-commit');
if (!tool.ok) console.warn(`\n*** SKIPPED: the pre-commit hook test: ${tool.reason} ***\n`);

/** Zero terminal SNR with an epsilon target: an error (epsilon-at-zero-snr), DESIGN section 5. */
const ZERO_SNR_EPSILON = `# Lanternfish Pictures: product stills fine-tune
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: epsilon
`;

/** Leading spacing: the sampler skips the last step; the safe fix is trailing spacing. */
const NIGHT_SAMPLER = `# Lanternfish Pictures: night storyboard sampler
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
  timestep_spacing: leading
sampling:
  num_inference_steps: 30
  guidance_scale: 7.5
  guidance_rescale: 0.7
`;

describe.skipIf(!tool.ok)('pre-commit hooks', () => {
  let dir: string;
  let env: NodeJS.ProcessEnv;
  let sha: string;
  const git = (cwd: string, ...args: string[]) => execFileSync('git', args, { cwd, env, encoding: 'utf8' }).trim();

  beforeAll(() => {
    dir = realpathSync(mkdtempSync(join(tmpdir(), 'noiselint-precommit-')));
    env = {
      ...cleanEnv(),
      PRE_COMMIT_HOME: join(dir, 'cache'),
      // Offline: every package comes from the npm cache the repository's own install filled.
      npm_config_offline: 'true',
      npm_config_audit: 'false',
      npm_config_fund: 'false',
      npm_config_update_notifier: 'false',
      GIT_AUTHOR_NAME: 'Lanternfish CI',
      GIT_AUTHOR_EMAIL: 'ci@lanternfish.example',
      GIT_COMMITTER_NAME: 'Lanternfish CI',
      GIT_COMMITTER_EMAIL: 'ci@lanternfish.example',
      GIT_CONFIG_GLOBAL: join(dir, 'gitconfig'),
      GIT_CONFIG_NOSYSTEM: '1',
    };
    writeFileSync(join(dir, 'gitconfig'), '[init]\n\tdefaultBranch = main\n[advice]\n\tdetachedHead = false\n');
    // The hook repository: this working tree's files as git sees them (tracked and new, not ignored).
    const source = join(dir, 'noiselint');
    const files = execFileSync('git', ['ls-files', '-z', '--cached', '--others', '--exclude-standard'], { cwd: REPO_ROOT, encoding: 'utf8' })
      .split('\0')
      .filter(Boolean);
    for (const f of files) {
      try {
        mkdirSync(dirname(join(source, f)), { recursive: true });
        copyFileSync(join(REPO_ROOT, f), join(source, f));
      } catch {
        // A file deleted in the working tree but still tracked.
      }
    }
    git(source, 'init', '-q');
    git(source, 'add', '-A');
    git(source, 'commit', '-qm', 'noiselint');
    sha = git(source, 'rev-parse', 'HEAD');
  }, 120_000);

  afterAll(() => {
    if (dir && !process.env.NOISELINT_KEEP_TEMP) removeTree(dir);
  });

  function project(name: string, hooks: string[]): string {
    const root = join(dir, name);
    mkdirSync(join(root, 'configs'), { recursive: true });
    git(root, 'init', '-q');
    const config = `repos:\n  - repo: ${join(dir, 'noiselint')}\n    rev: ${sha}\n    hooks:\n${hooks.map((h) => `      - id: ${h}\n`).join('')}`;
    writeFileSync(join(root, '.pre-commit-config.yaml'), config);
    return root;
  }

  const preCommit = (root: string) => spawnSync('pre-commit', ['run', '--color', 'never'], { cwd: root, env, encoding: 'utf8', timeout: 540_000 });

  it('noiselint-check fails the commit on a finding with an error and passes clean or unrelated files', () => {
    const root = project('studio-check', ['noiselint-check']);
    writeFileSync(join(root, 'configs/stills-train.yaml'), ZERO_SNR_EPSILON);
    writeFileSync(join(root, 'configs/notes.yaml'), 'title: storyboard notes\n');
    git(root, 'add', '-A');
    const failing = preCommit(root);
    const out = `${failing.stdout}${failing.stderr}`;
    expect(failing.status, out).toBe(1);
    expect(out).toMatch(/noiselint check\.+Failed/);
    expect(out).toMatch(/configs\/stills-train\.yaml:8:\d+: error: .*\(noiselint rules epsilon-at-zero-snr\)/);

    // The target fixed (v-prediction needs fine-tuning, which this run plans): the hook passes.
    writeFileSync(join(root, 'configs/stills-train.yaml'), ZERO_SNR_EPSILON.replace('prediction_type: epsilon', 'prediction_type: v_prediction'));
    git(root, 'add', '-A');
    const passing = preCommit(root);
    expect(passing.status, `${passing.stdout}${passing.stderr}`).toBe(0);
    expect(passing.stdout).toMatch(/noiselint check\.+Passed/);

    // Only a file that is no diffusion config: nothing to check is fine for a hook.
    git(root, 'rm', '-q', '--cached', 'configs/stills-train.yaml');
    const unrelated = preCommit(root);
    expect(unrelated.status, `${unrelated.stdout}${unrelated.stderr}`).toBe(0);
  }, 600_000);

  it('noiselint-fix rewrites the staged file with the safe fix and reports it', () => {
    const root = project('studio-fix', ['noiselint-fix']);
    const file = join(root, 'configs/night-sampler.yaml');
    writeFileSync(file, NIGHT_SAMPLER);
    git(root, 'add', '-A');
    const r = preCommit(root);
    const out = `${r.stdout}${r.stderr}`;
    // pre-commit fails a hook that modified files, so the fix is reviewed before committing.
    expect(r.status, out).toBe(1);
    expect(out).toMatch(/files were modified by this hook/);
    expect(readFileSync(file, 'utf8')).toBe(NIGHT_SAMPLER.replace('timestep_spacing: leading', 'timestep_spacing: trailing'));
  }, 600_000);
});
