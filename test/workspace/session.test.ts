import { describe, expect, it } from 'vitest';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { WorkspaceSession } from '../../server/src/workspace/session';
import { overlayFs } from '../../server/src/workspace/overlay';
import { nodeFs, type WorkspaceFs } from '../../server/src/workspace/fs';
import type { FileRole } from '../../server/src/workspace/pairing';
import { useTempTrees } from './helpers';

const tree = useTempTrees();

const TRAIN =
  'training:\n  learning_rate: 1.0e-5\nnoise_scheduler:\n  num_train_timesteps: 1000\n  beta_schedule: scaled_linear\n  beta_start: 0.00085\n  beta_end: 0.012\n  prediction_type: epsilon\n';
const SAMPLE = 'sampler:\n  num_inference_steps: 30\n  timestep_spacing: trailing\n  guidance_scale: 5.0\n';

function countingFs(reads: Map<string, number>): WorkspaceFs {
  return {
    ...nodeFs,
    readBytes: (p) => {
      reads.set(p, (reads.get(p) ?? 0) + 1);
      return nodeFs.readBytes(p);
    },
  };
}

describe('workspace session', () => {
  it('pairs a training and a sampling file and hands the partner documents with their shown path', () => {
    const root = tree({ 'night/train.yaml': TRAIN, 'night/sample.yaml': SAMPLE });
    const session = new WorkspaceSession({ stableTree: true, showPath: (p) => p.slice(root.length + 1) });
    const sample = join(root, 'night/sample.yaml');
    const { project } = session.projectFor(sample);
    const pairing = session.partnersOf(sample, project);
    expect(pairing.pairRole).toBe('sampling');
    expect(pairing.paths).toEqual([join(root, 'night/train.yaml')]);
    expect(pairing.partners.map((p) => p.path)).toEqual(['night/train.yaml']);
    expect(pairing.partners[0]!.setup.isDiffusionConfig).toBe(true);
    expect(pairing.texts.get(join(root, 'night/train.yaml'))).toBe(TRAIN);
  });

  it('a check run reads each file once; an editor session sees a changed file', () => {
    const root = tree({ 'night/train.yaml': TRAIN, 'night/sample.yaml': SAMPLE });
    const train = join(root, 'night/train.yaml');
    const reads = new Map<string, number>();
    const stable = new WorkspaceSession({ fs: countingFs(reads), stableTree: true });
    expect(stable.roleOf(train)).toBe('training');
    stable.readText(train, stable.projectFor(train).project);
    expect(stable.roleOf(train)).toBe('training');
    expect(reads.get(train)).toBe(1);

    const editor = new WorkspaceSession();
    expect(editor.roleOf(train)).toBe('training');
    writeFileSync(train, SAMPLE);
    // Remembered until told, as the server is told by file events...
    expect(editor.roleOf(train)).toBe('training');
    editor.fileChanged(train);
    expect(editor.roleOf(train)).toBe('sampling');
  });

  it('asks the caller first for a role (an open document) and reads open text through an overlay', () => {
    const root = tree({ 'night/train.yaml': TRAIN, 'night/sample.yaml': SAMPLE });
    const sample = join(root, 'night/sample.yaml');
    const train = join(root, 'night/train.yaml');
    // The open, unsaved training text lost its schedule: no longer a training file.
    const open = new Map([[train, 'notes: nothing here\n']]);
    const fs = overlayFs({ textOf: (p) => open.get(p), namesIn: () => undefined });
    const session: WorkspaceSession = new WorkspaceSession({
      fs,
      knownRole: (p): FileRole | undefined => (open.has(p) ? session.readRole(p) : undefined),
    });
    expect(session.roleOf(train)).toBe('none');
    expect(session.partnersOf(sample, session.projectFor(sample).project).partners).toEqual([]);
    open.set(train, TRAIN);
    expect(session.roleOf(train)).toBe('training');
    expect(session.partnersOf(sample, session.projectFor(sample).project).partners).toHaveLength(1);
  });

  it('lists open documents that are not on disk yet in their folder', () => {
    const root = tree({ 'night/sample.yaml': SAMPLE });
    const fresh = join(root, 'night/train.yaml');
    const fs = overlayFs({
      textOf: (p) => (p === fresh ? TRAIN : undefined),
      namesIn: (f) => (f === join(root, 'night') ? ['train.yaml'] : undefined),
    });
    expect(
      fs
        .readDir(join(root, 'night'))
        .map((e) => e.name)
        .sort(),
    ).toEqual(['sample.yaml', 'train.yaml']);
    const session = new WorkspaceSession({ fs });
    const sample = join(root, 'night/sample.yaml');
    expect(session.partnersOf(sample, session.projectFor(sample).project).paths).toEqual([fresh]);
  });

  it('selects by the project file first, then by extra globs', () => {
    const root = tree({
      'noiselint.project.yaml': 'include: ["runs/**"]\n',
      'runs/a.yaml': TRAIN,
      'other/b.yaml': TRAIN,
    });
    const session = new WorkspaceSession();
    const a = join(root, 'runs/a.yaml');
    const b = join(root, 'other/b.yaml');
    const pa = session.projectFor(a).project;
    expect(session.selects(a, pa)).toBe(true);
    expect(session.selects(b, session.projectFor(b).project)).toBe(false);
    expect(session.selects(a, pa, { base: root, include: [], exclude: ['runs/*.yaml'] })).toBe(false);
  });

  it('an invalid project file falls back to the defaults and says why', () => {
    const root = tree({ 'noiselint.project.yaml': 'rules: [not, a, map]\n', 'a.yaml': TRAIN });
    const lookup = new WorkspaceSession().projectFor(join(root, 'a.yaml'));
    expect(lookup.problem).toMatch(/rules/);
    expect(lookup.project.file).toBeNull();
  });
});
