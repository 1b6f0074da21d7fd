import { describe, expect, it } from 'vitest';
import { symlinkSync } from 'node:fs';
import { join, relative } from 'node:path';
import {
  findPartners,
  PairingMemo,
  pairNameKey,
  resolvePairPath,
  validatePairs,
  type FileRole,
  type RoleProbe,
} from '../../server/src/workspace/pairing';
import { nodeFs, type WorkspaceFs } from '../../server/src/workspace/fs';
import { loadProject } from '../../server/src/workspace/project';
import { useTempTrees } from './helpers';

const tree = useTempTrees();

/** Role from the file's first line, `# role: training`: a stand-in for the content analysis. */
function roleFromMarker(root: string, roles: Record<string, FileRole>): RoleProbe {
  return (path) => roles[relative(root, path)] ?? 'none';
}

function partnersOf(root: string, file: string, roles: Record<string, FileRole>) {
  const project = loadProject(join(root, file));
  const match = findPartners(join(root, file), project, { roleOf: roleFromMarker(root, roles) });
  return match && { role: match.role, how: match.how, partners: match.partners.map((p) => relative(root, p)) };
}

describe('automatic pairing', () => {
  it('pairs the only training file with the only sampling file of a folder', () => {
    const root = tree({ 'night/finetune.yaml': '', 'night/serve.yaml': '', 'night/notes.json': '' });
    const roles: Record<string, FileRole> = { 'night/finetune.yaml': 'training', 'night/serve.yaml': 'sampling', 'night/notes.json': 'none' };
    expect(partnersOf(root, 'night/finetune.yaml', roles)).toEqual({ role: 'training', how: 'auto-role', partners: ['night/serve.yaml'] });
    expect(partnersOf(root, 'night/serve.yaml', roles)).toEqual({ role: 'sampling', how: 'auto-role', partners: ['night/finetune.yaml'] });
    expect(partnersOf(root, 'night/notes.json', roles)).toBeNull();
  });

  it('does not pair across folders', () => {
    const root = tree({ 'a/train.yaml': '', 'b/sample.yaml': '' });
    expect(partnersOf(root, 'a/train.yaml', { 'a/train.yaml': 'training', 'b/sample.yaml': 'sampling' })).toBeNull();
  });

  it('with several files of a role, pairs by name words', () => {
    const root = tree({ 'train-night.yaml': '', 'sample-night.yaml': '', 'train_stills.yaml': '', 'stills_infer.yaml': '', 'train-misc.yaml': '' });
    const roles: Record<string, FileRole> = {
      'train-night.yaml': 'training',
      'sample-night.yaml': 'sampling',
      'train_stills.yaml': 'training',
      'stills_infer.yaml': 'sampling',
      'train-misc.yaml': 'training',
    };
    expect(partnersOf(root, 'train-night.yaml', roles)).toEqual({ role: 'training', how: 'auto-name', partners: ['sample-night.yaml'] });
    expect(partnersOf(root, 'stills_infer.yaml', roles)).toEqual({ role: 'sampling', how: 'auto-name', partners: ['train_stills.yaml'] });
    expect(partnersOf(root, 'train-misc.yaml', roles)).toBeNull();
  });

  it('an ambiguous name match pairs nothing', () => {
    const root = tree({ 'train-night.yaml': '', 'night-train.yml': '', 'sample-night.yaml': '' });
    const roles: Record<string, FileRole> = { 'train-night.yaml': 'training', 'night-train.yml': 'training', 'sample-night.yaml': 'sampling' };
    expect(partnersOf(root, 'sample-night.yaml', roles)).toBeNull();
  });

  it('mixed files (training and sampling in one) are never auto-paired', () => {
    const root = tree({ 'all.yaml': '', 'sample.yaml': '' });
    expect(partnersOf(root, 'all.yaml', { 'all.yaml': 'mixed', 'sample.yaml': 'sampling' })).toBeNull();
  });

  it('autoPair: false turns it off', () => {
    const root = tree({ 'noiselint.project.yaml': 'autoPair: false\n', 't.yaml': '', 's.yaml': '' });
    expect(partnersOf(root, 't.yaml', { 't.yaml': 'training', 's.yaml': 'sampling' })).toBeNull();
  });

  it('files the project excludes take no part', () => {
    const root = tree({ 'noiselint.project.yaml': 'exclude: ["old-*"]\n', 't.yaml': '', 's.yaml': '', 'old-s.yaml': '' });
    const roles: Record<string, FileRole> = { 't.yaml': 'training', 's.yaml': 'sampling', 'old-s.yaml': 'sampling' };
    expect(partnersOf(root, 't.yaml', roles)?.partners).toEqual(['s.yaml']);
  });

  it('pairNameKey drops role words and separators', () => {
    expect(pairNameKey('train-night_v2.yaml')).toBe('night-v2');
    expect(pairNameKey('Night.Sampling.json')).toBe('night');
    expect(pairNameKey('inference.yaml')).toBe('');
  });
});

describe('explicit pairs', () => {
  const project = [
    'pairs:',
    '  - training: stills/training/finetune-v.yaml',
    '    sampling: stills/serving/sampler.yaml',
    '  - training: stills/training/finetune-v.yaml',
    '    sampling: stills/serving/sampler-draft.yaml',
  ].join('\n');

  it('pairs files in different folders, and a training file with several sampling files', () => {
    const root = tree({
      'noiselint.project.yaml': project,
      'stills/training/finetune-v.yaml': '',
      'stills/serving/sampler.yaml': '',
      'stills/serving/sampler-draft.yaml': '',
    });
    expect(partnersOf(root, 'stills/training/finetune-v.yaml', {})).toEqual({
      role: 'training',
      how: 'explicit',
      partners: ['stills/serving/sampler.yaml', 'stills/serving/sampler-draft.yaml'],
    });
    expect(partnersOf(root, 'stills/serving/sampler-draft.yaml', {})).toEqual({
      role: 'sampling',
      how: 'explicit',
      partners: ['stills/training/finetune-v.yaml'],
    });
  });

  it('explicit pairs win over automatic pairing, and their files leave the automatic pool', () => {
    const root = tree({
      'noiselint.project.yaml': 'pairs:\n  - { training: a/t1.yaml, sampling: b/s.yaml }\n',
      'a/t1.yaml': '',
      'a/t2.yaml': '',
      'a/s2.yaml': '',
      'b/s.yaml': '',
    });
    const roles: Record<string, FileRole> = { 'a/t1.yaml': 'training', 'a/t2.yaml': 'training', 'a/s2.yaml': 'sampling', 'b/s.yaml': 'sampling' };
    expect(partnersOf(root, 'a/t1.yaml', roles)?.partners).toEqual(['b/s.yaml']);
    // t1 is taken, so t2 is the only training file left in a/.
    expect(partnersOf(root, 'a/t2.yaml', roles)).toEqual({ role: 'training', how: 'auto-role', partners: ['a/s2.yaml'] });
  });
});

describe('pair paths stay inside the project folder', () => {
  it('rejects "..", absolute paths, missing files and folders, with one-line warnings', () => {
    const outside = tree({ 'secret.yaml': 'x: 1\n' });
    const root = tree({
      'noiselint.project.yaml': [
        'pairs:',
        `  - { training: t.yaml, sampling: ../${relative(join(outside, '..'), outside)}/secret.yaml }`,
        `  - { training: t.yaml, sampling: ${join(outside, 'secret.yaml')} }`,
        '  - { training: t.yaml, sampling: missing.yaml }',
        '  - { training: t.yaml, sampling: sub }',
        '  - { training: t.yaml, sampling: t.yaml }',
      ].join('\n'),
      't.yaml': '',
      'sub/x.yaml': '',
    });
    const project = loadProject(join(root, 't.yaml'));
    const { pairs, warnings } = validatePairs(project);
    expect(pairs).toEqual([]);
    expect(warnings).toHaveLength(5);
    expect(warnings[0]).toMatch(/pairs\[0\]\.sampling: ".*secret\.yaml" leaves the project folder; pair ignored$/);
    expect(warnings[1]).toMatch(/pairs\[1\]\.sampling: ".*" must be relative to the project folder; pair ignored$/);
    expect(warnings[2]).toMatch(/pairs\[2\]\.sampling: "missing\.yaml" does not exist; pair ignored$/);
    expect(warnings[3]).toMatch(/pairs\[3\]\.sampling: "sub" is not a file; pair ignored$/);
    expect(warnings[4]).toMatch(/pairs\[4\]: training and sampling are the same file; pair ignored$/);
    for (const w of warnings) expect(w).not.toContain('\n');
    expect(partnersOf(root, 't.yaml', {})).toBeNull();
  });

  it('rejects a symlink inside the project that resolves outside it', () => {
    const outside = tree({ 'secret.yaml': 'x: 1\n' });
    const root = tree({ 'noiselint.project.yaml': 'pairs:\n  - { training: t.yaml, sampling: link.yaml }\n', 't.yaml': '' });
    symlinkSync(join(outside, 'secret.yaml'), join(root, 'link.yaml'));
    const project = loadProject(join(root, 't.yaml'));
    const r = resolvePairPath(project, 'link.yaml');
    expect(r).toEqual({ ok: false, problem: '"link.yaml" is a link that resolves outside the project folder' });
    expect(partnersOf(root, 't.yaml', { 't.yaml': 'training', 'link.yaml': 'sampling' })).toBeNull();
  });

  it('accepts a symlink that stays inside the project', () => {
    const root = tree({ 'noiselint.project.yaml': 'pairs:\n  - { training: t.yaml, sampling: link.yaml }\n', 't.yaml': '', 'real/s.yaml': '' });
    symlinkSync(join(root, 'real/s.yaml'), join(root, 'link.yaml'));
    expect(partnersOf(root, 't.yaml', {})?.partners).toEqual(['link.yaml']);
  });

  it('automatic pairing also ignores sibling links that point outside', () => {
    const outside = tree({ 'serve.yaml': '' });
    const root = tree({ 'noiselint.project.yaml': '', 't.yaml': '' });
    symlinkSync(join(outside, 'serve.yaml'), join(root, 's.yaml'));
    expect(partnersOf(root, 't.yaml', { 't.yaml': 'training', 's.yaml': 'sampling' })).toBeNull();
  });
});

describe('a pairing memo (one run over a tree that does not change)', () => {
  /** The disk, counting the folder listings and canonical-path look-ups pairing asks for. */
  function countingFs() {
    const calls = { readDir: 0, realpath: 0 };
    const fs: WorkspaceFs = {
      ...nodeFs,
      readDir: (p) => (calls.readDir++, nodeFs.readDir(p)),
      realpath: (p) => (calls.realpath++, nodeFs.realpath(p)),
    };
    return { fs, calls };
  }

  it('lists each folder once and needs no canonical paths when no links are involved, with the same pairs', () => {
    const files: Record<string, string> = {};
    const roles: Record<string, FileRole> = {};
    for (let k = 0; k < 10; k++) {
      files[`night/train-take${k}.yaml`] = '';
      files[`night/sample-take${k}.yaml`] = '';
      roles[`night/train-take${k}.yaml`] = 'training';
      roles[`night/sample-take${k}.yaml`] = 'sampling';
    }
    const root = tree(files);
    const { fs, calls } = countingFs();
    const memo = new PairingMemo(fs);
    const roleOf = roleFromMarker(root, roles);
    for (const file of Object.keys(files)) {
      const project = loadProject(join(root, file));
      const withMemo = findPartners(join(root, file), project, { roleOf, memo });
      const alone = findPartners(join(root, file), project, { roleOf });
      expect(withMemo).toEqual(alone);
      const other = file.startsWith('night/train-') ? file.replace('train-', 'sample-') : file.replace('sample-', 'train-');
      expect(withMemo).toEqual({ role: roles[file], how: 'auto-name', partners: [join(root, other)] });
    }
    expect(calls).toEqual({ readDir: 1, realpath: 0 });
  });

  it('a file asked about through a link it shares with a candidate pairs as that candidate', () => {
    // link.yaml is excluded, so it is not a candidate itself; it is the same file as t.yaml.
    const root = tree({ 'noiselint.project.yaml': 'exclude: ["link.yaml"]\n', 't.yaml': '', 's.yaml': '' });
    symlinkSync(join(root, 't.yaml'), join(root, 'link.yaml'));
    const roles: Record<string, FileRole> = { 't.yaml': 'training', 's.yaml': 'sampling' };
    const project = loadProject(join(root, 't.yaml'));
    const memo = new PairingMemo();
    const viaLink = findPartners(join(root, 'link.yaml'), project, { roleOf: roleFromMarker(root, roles), memo });
    expect(viaLink).toEqual({ role: 'training', how: 'auto-role', partners: [join(root, 's.yaml')] });
    expect(findPartners(join(root, 'link.yaml'), project, { roleOf: roleFromMarker(root, roles) })).toEqual(viaLink);
  });

  it('with a link among the candidates, the first name of the file in sorted order speaks for it', () => {
    // b.yaml links to a.yaml: one training file under two names, so one training and one sampling file.
    const root = tree({ 'a.yaml': '', 'serve.yaml': '' });
    symlinkSync(join(root, 'a.yaml'), join(root, 'b.yaml'));
    const roles: Record<string, FileRole> = { 'a.yaml': 'training', 'b.yaml': 'none', 'serve.yaml': 'sampling' };
    const memo = new PairingMemo();
    const project = loadProject(join(root, 'a.yaml'));
    const viaB = findPartners(join(root, 'b.yaml'), project, { roleOf: roleFromMarker(root, roles), memo });
    expect(viaB).toEqual({ role: 'training', how: 'auto-role', partners: [join(root, 'serve.yaml')] });
  });
});
