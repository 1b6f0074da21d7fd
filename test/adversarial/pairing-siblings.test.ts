/**
 * Pairing reads only what it needs of a file's siblings: a large sibling is not parsed to learn
 * its role, and large readings are not kept for the rest of the run.
 */
import { describe, expect, it } from 'vitest';
import { join } from 'node:path';
import { check, parseCheckArgs } from '../../server/src/cli/commands/check';
import type { CliIO } from '../../server/src/cli/io';
import { nodeFs, type WorkspaceFs } from '../../server/src/workspace/fs';
import { clearProjectCache } from '../../server/src/workspace/project';
import { WorkspaceSession } from '../../server/src/workspace/session';
import { useTempTrees } from '../workspace/helpers';

const tree = useTempTrees();

const SAMPLE = '# Lanternfish Pictures: preview sampler\nnum_inference_steps: 30\ntimestep_spacing: trailing\n';
/** A training config padded to about 1 MB with a long notes field. */
const BIG_TRAIN = `training:\n  learning_rate: 1.0e-5\nnoise_scheduler:\n  num_train_timesteps: 1000\n  beta_schedule: scaled_linear\nnotes: "${'night frame '.repeat(90_000)}"\n`;

function counting(reads: Map<string, number>): WorkspaceFs {
  return {
    ...nodeFs,
    readBytes(path, maxBytes) {
      reads.set(path, (reads.get(path) ?? 0) + 1);
      return nodeFs.readBytes(path, maxBytes);
    },
  };
}

describe('pairing and large siblings', () => {
  it('checking one small file next to 16 siblings of 1 MB reads none of them', async () => {
    expect(BIG_TRAIN.length).toBeGreaterThan(256 * 1024);
    const files: Record<string, string> = { 'night/sample.yaml': SAMPLE };
    for (let i = 0; i < 16; i++) files[`night/train-${i}.yaml`] = BIG_TRAIN;
    const root = tree(files);
    const reads = new Map<string, number>();
    clearProjectCache();
    const io: CliIO = { cwd: root, stdout: () => undefined, stderr: () => undefined, isTTY: false, env: {} };
    await check(parseCheckArgs(['night/sample.yaml', '--empty-ok']), io, counting(reads));
    expect([...reads.keys()]).toEqual([join(root, 'night/sample.yaml')]);
  });

  it('a large file is still checked in full; its reading is not kept after its role probe', () => {
    const root = tree({ 'night/train.yaml': BIG_TRAIN, 'night/sample.yaml': SAMPLE });
    const reads = new Map<string, number>();
    const session = new WorkspaceSession({ fs: counting(reads), stableTree: true });
    const big = join(root, 'night/train.yaml');
    // Too large to be probed for its role: not auto-paired, and not read for it.
    expect(session.roleOf(big)).toBe('none');
    expect(reads.get(big)).toBeUndefined();
    const read = session.readText(big, session.projectFor(big).project);
    expect(read.ok).toBe(true);
    expect(reads.get(big)).toBe(1);
  });
});
