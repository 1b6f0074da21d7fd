/**
 * The demo workspace does what examples/README.md says: each file raises exactly the rules the
 * README names for it (demo data; the expectations below are read from that table).
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { readFileSync } from 'node:fs';
import { removeTree } from '../workspace/helpers';
import { runCli, tempTree } from './check-helpers';
import { findPartners } from '../../server/src/workspace/pairing';
import { clearProjectCache, loadProject } from '../../server/src/workspace/project';
import { WorkspaceSession } from '../../server/src/workspace/session';

const repo = join(__dirname, '..', '..');

interface JsonFile {
  path: string;
  findings: { rule: string; severity: string; message: string; related: { path: string }[] }[];
}

describe('check examples (the Lanternfish Pictures demo workspace)', () => {
  it('reports what the README promises, file by file', async () => {
    const r = await runCli(['check', '--format', 'json', 'examples'], repo);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(1);
    const out = JSON.parse(r.stdout) as { files: JsonFile[] };
    const rulesOf = (p: string) => {
      const file = out.files.find((f) => f.path === `examples/${p}`);
      expect(file, p).toBeDefined();
      return [...new Set(file!.findings.map((f) => `${f.rule}:${f.severity}`))].sort();
    };
    expect(rulesOf('night-storyboards/train-finetune.yaml')).toEqual(['offset-noise-conflict:warning', 'terminal-snr-leak:warning']);
    expect(rulesOf('night-storyboards/sample-leading.yaml')).toEqual([
      'sampler-skips-last-step:warning',
      'terminal-snr-leak:warning',
      'train-sample-mismatch:error',
    ]);
    expect(rulesOf('product-stills-fixed/training/finetune-v-zero-snr.yaml')).toEqual([]);
    expect(rulesOf('product-stills-fixed/serving/sampler-trailing.yaml')).toEqual([]);
    expect(rulesOf('pixel-cosine/thumbnail-model.json')).toEqual(['few-steps-linspace:info']);
    expect(rulesOf('flow-matching/layout-flow.yaml')).toEqual([]);
    expect(rulesOf('karras-sigmas/edm-heun.jsonc')).toEqual([]);
    expect(rulesOf('karras-sigmas/zero-snr-euler-karras.jsonc')).toEqual(['infinite-sigma-at-zero-snr:warning']);
    expect(rulesOf('broken/bad-values.yaml')).toEqual(['guidance-rescale-range:error', 'schedule-invalid:error', 'unknown-value:error']);
    expect(rulesOf('broken/too-many-steps.yaml')).toEqual(['steps-out-of-range:error']);
    expect(rulesOf('broken/offset-past-the-end.yaml')).toEqual(['terminal-snr-leak:info', 'timestep-out-of-range:error']);
    expect(rulesOf('broken/explicit-betas.yaml')).toEqual(['schedule-invalid:error']);
    // Both findings of the archive re-render are marked deliberate in the file.
    expect(rulesOf('archive-renders/reproduce-2025-storyboards.yaml')).toEqual([]);
    expect(rulesOf('launcher-args/stills-args.toml')).toEqual([]);
    expect(rulesOf('launcher-args/night-args.toml')).toEqual(['offset-noise-conflict:warning', 'terminal-snr-leak:warning']);
    // The project file itself is never checked as a config; the README is not a config file.
    expect(out.files.map((f) => f.path)).not.toContain('examples/noiselint.project.yaml');
    expect(out.files).toHaveLength(15);
  });

  it('the TOML launcher arguments: exact findings, and `fix` writes both fixes as minimal edits', async () => {
    const rel = 'examples/launcher-args/night-args.toml';
    const text = readFileSync(join(repo, rel), 'utf8');
    const out = JSON.parse((await runCli(['check', '--format', 'json', rel], repo)).stdout) as {
      files: {
        findings: {
          rule: string;
          severity: string;
          message: string;
          /** [startLine, startCharacter, endLine, endCharacter] (the compact form). */
          range: [number, number, number, number];
        }[];
      }[];
    };
    const lineText = (n: number) => text.split('\n')[n]!;
    const found = out.files[0]!.findings.map((f) => ({
      rule: f.rule,
      severity: f.severity,
      text: lineText(f.range[0]).slice(f.range[1], f.range[3]),
    }));
    expect(found).toEqual([
      { rule: 'terminal-snr-leak', severity: 'warning', text: 'noise_scheduler.beta_schedule = "scaled_linear"' },
      { rule: 'offset-noise-conflict', severity: 'warning', text: 'noise_offset = 0.05' },
    ]);
    // sqrt(abar_T) = 0.068265, SNR_T = 0.004682 for scaled_linear 0.00085 -> 0.012, T = 1000:
    // Lin et al. 2023, Table 1 (recalled from memory; float64 recomputation agrees).
    expect(out.files[0]!.findings[0]!.message).toContain('(999) is 0.068 (SNR 4.7e-3)');
    expect(out.files[0]!.findings[1]!.message).toContain('offset noise 0.05');

    const root = tempTree({ 'night-args.toml': text });
    try {
      const r = await runCli(['fix', '--accept-retraining', '--accept-comment-edits', 'night-args.toml'], root);
      expect(r.stderr).toBe('');
      const fixed = readFileSync(join(root, 'night-args.toml'), 'utf8');
      expect(fixed).toBe(
        text
          .replace(
            'noise_scheduler.prediction_type = "epsilon"\n',
            'noise_scheduler.prediction_type = "v_prediction"\nnoise_scheduler.rescale_betas_zero_snr = true\n',
          )
          .replace('noise_offset = 0.05  # brighter skies, as in run 011\n', ''),
      );
      const again = JSON.parse((await runCli(['check', '--format', 'json', 'night-args.toml'], root)).stdout) as { files: { findings: unknown[] }[] };
      expect(again.files[0]!.findings).toEqual([]);
    } finally {
      removeTree(root);
    }
  });

  it('the night pair is found automatically and the mismatch points into the training file', async () => {
    const out = JSON.parse((await runCli(['check', '--format', 'json', 'examples/night-storyboards'], repo)).stdout) as { files: JsonFile[] };
    const sample = out.files.find((f) => f.path.endsWith('sample-leading.yaml'))!;
    const mismatch = sample.findings.find((f) => f.rule === 'train-sample-mismatch')!;
    expect(mismatch.message).toContain('examples/night-storyboards/train-finetune.yaml');
    expect(mismatch.related.map((x) => x.path)).toContain('examples/night-storyboards/train-finetune.yaml');
  });

  it('the project override matters: without the project file, offset noise alone is information', async () => {
    const text = readFileSync(join(repo, 'examples/night-storyboards/train-finetune.yaml'), 'utf8');
    const root = tempTree({ 'train-finetune.yaml': text });
    try {
      const out = JSON.parse((await runCli(['check', '--format', 'json'], root)).stdout) as { files: JsonFile[] };
      expect(out.files[0]!.findings.find((f) => f.rule === 'offset-noise-conflict')?.severity).toBe('info');
    } finally {
      removeTree(root);
    }
  });

  it('pairing of the demo files: the stills pair is explicit, the night pair automatic (by content roles)', () => {
    clearProjectCache();
    const at = (p: string) => join(repo, 'examples', p);
    const probe = new WorkspaceSession({ stableTree: true }).roleOf;
    expect(probe(at('night-storyboards/train-finetune.yaml'))).toBe('training');
    expect(probe(at('night-storyboards/sample-leading.yaml'))).toBe('sampling');
    const stills = at('product-stills-fixed/serving/sampler-trailing.yaml');
    expect(findPartners(stills, loadProject(stills), { roleOf: probe })).toEqual({
      role: 'sampling',
      how: 'explicit',
      partners: [at('product-stills-fixed/training/finetune-v-zero-snr.yaml')],
    });
    const night = at('night-storyboards/train-finetune.yaml');
    expect(findPartners(night, loadProject(night), { roleOf: probe })).toEqual({
      role: 'training',
      how: 'auto-role',
      partners: [at('night-storyboards/sample-leading.yaml')],
    });
  });
});
