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
      expect(out.files[0].findings.find((f) => f.rule === 'offset-noise-conflict')?.severity).toBe('info');
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
