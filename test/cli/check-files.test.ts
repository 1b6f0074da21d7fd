import { afterEach, describe, expect, it } from 'vitest';
import { chmodSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { check, parseCheckArgs } from '../../server/src/cli/commands/check';
import { WorkspaceSession } from '../../server/src/workspace/session';
import { analyzeText, findingsAsData } from '../../server/src/engine/api';
import { originOf } from '../../server/src/fix/applicable';
import { clearProjectCache, loadProject } from '../../server/src/workspace/project';
import type { CliIO } from '../../server/src/cli/io';
import { nodeFs, type WorkspaceFs } from '../../server/src/workspace/fs';
import { removeTree } from '../workspace/helpers';
import { CLEAN, LEAKY_V, ZERO_SNR_EPSILON, runCli, tempTree } from './check-helpers';

const roots: string[] = [];
function tree(files: Record<string, string | Uint8Array>): string {
  const root = tempTree(files);
  roots.push(root);
  return root;
}
afterEach(() => {
  while (roots.length) {
    const root = roots.pop()!;
    try {
      chmodSync(join(root, 'locked.yaml'), 0o644);
    } catch {
      // Not every tree has one.
    }
    removeTree(root);
  }
});

const canLockFiles = typeof process.getuid === 'function' && process.getuid() !== 0;

describe('check: files that are hard to read', () => {
  it.skipIf(!canLockFiles)('an unreadable file is a one-line error (exit 2); the others are still checked', async () => {
    const root = tree({ 'locked.yaml': LEAKY_V, 'eps.yaml': ZERO_SNR_EPSILON });
    chmodSync(join(root, 'locked.yaml'), 0o000);
    const r = await runCli(['check', '--format', 'json'], root);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('noiselint check: locked.yaml: cannot read: permission denied\n');
    const out = JSON.parse(r.stdout);
    expect(out.files.map((f: { path: string }) => f.path)).toEqual(['eps.yaml']);
    expect(out.files[0].findings.length).toBeGreaterThan(0);
  });

  it('a file the disk refuses to read is a one-line error (exit 2); the others are still checked', async () => {
    // Root may read any file, so the refusal is simulated through the injectable file-system view.
    const root = tree({ 'locked.yaml': LEAKY_V, 'eps.yaml': ZERO_SNR_EPSILON });
    const refusing: WorkspaceFs = {
      ...nodeFs,
      readBytes(path) {
        if (path.endsWith('locked.yaml')) throw Object.assign(new Error('EACCES: permission denied'), { code: 'EACCES' });
        return nodeFs.readBytes(path);
      },
    };
    let stdout = '';
    let stderr = '';
    const io: CliIO = { cwd: root, stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t), isTTY: false, env: {} };
    const code = await check(parseCheckArgs(['--format', 'json']), io, refusing);
    expect(code).toBe(2);
    expect(stderr).toBe('noiselint check: locked.yaml: cannot read: permission denied\n');
    expect(JSON.parse(stdout).files.map((f: { path: string }) => f.path)).toEqual(['eps.yaml']);
  });

  it('binary and non-UTF-8 files are skipped with a one-line message; empty files are fine', async () => {
    const root = tree({
      'binary.json': new Uint8Array([0x7b, 0x00, 0x01, 0x02, 0x7d]),
      'latin1.yaml': new Uint8Array([...Buffer.from('name: caf'), 0xe9, 0x0a]),
      'empty.yaml': '',
      'leaky.yaml': LEAKY_V,
    });
    const r = await runCli(['check'], root);
    expect(r.code).toBe(0);
    expect(r.stderr.split('\n').filter(Boolean).sort()).toEqual([
      'noiselint check: binary.json: skipped: looks binary (contains NUL bytes)',
      'noiselint check: latin1.yaml: skipped: not valid UTF-8',
    ]);
    expect(r.stdout).toMatch(/leaky\.yaml:\d+:\d+: warning: .*\(noiselint rules terminal-snr-leak\)$/m);
    // The empty file names no schedule key: passed over without a parse.
    expect(r.stdout).toMatch(/in 1 file checked, 2 skipped, 1 other file passed over \(no schedule or step-count key\)/);

    const json = JSON.parse((await runCli(['check', '--format', 'json'], root)).stdout);
    expect(json.files.map((f: { path: string }) => f.path)).toEqual(['leaky.yaml']);
    expect(json.summary.passedOver).toBe(1);
    expect(json.skipped.map((s: { path: string }) => s.path)).toEqual(['binary.json', 'latin1.yaml']);
  });

  it('a file above limits.maxFileBytes is skipped without reading it all', async () => {
    const big = `# ${'x'.repeat(500)}\n${LEAKY_V}`;
    const root = tree({ 'noiselint.project.yaml': 'limits: { maxFileBytes: 100 }\n', 'big.yaml': big, 'small.yaml': 'num_train_timesteps: 1000\n' });
    const r = await runCli(['check'], root);
    expect(r.code).toBe(0);
    expect(r.stderr).toBe(`noiselint check: big.yaml: skipped: ${big.length} bytes is above the 100 bytes limit (limits.maxFileBytes)\n`);
    // Named on the command line, the same skip is an error: nothing was checked that was asked for.
    const named = await runCli(['check', 'big.yaml'], root);
    expect(named.code).toBe(2);
    expect(named.stderr.split('\n')[0]).toBe(
      `noiselint check: big.yaml: skipped: ${big.length} bytes is above the 100 bytes limit (limits.maxFileBytes)`,
    );
  });

  it('a missing path or an empty glob is an error (exit 2), the rest is checked', async () => {
    const root = tree({ 'leaky.yaml': LEAKY_V });
    const r = await runCli(['check', 'nope.yaml', 'runs/**/*.yaml', 'leaky.yaml'], root);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('noiselint check: nope.yaml: no such file or folder\nnoiselint check: runs/**/*.yaml: no files match\n');
    expect(r.stdout).toMatch(/leaky\.yaml:\d+:\d+: warning: .*\(noiselint rules terminal-snr-leak\)$/m);
  });

  it('an invalid project file stops the run with one line naming the field (exit 2)', async () => {
    const root = tree({ 'noiselint.project.yaml': 'rules:\n  terminal-snr-leek: off\n', 'leaky.yaml': LEAKY_V });
    const r = await runCli(['check'], root);
    expect(r).toEqual({
      code: 2,
      stdout: '',
      stderr: 'noiselint check: noiselint.project.yaml: rules.terminal-snr-leek: unknown rule (did you mean "terminal-snr-leak"?)\n',
    });
  });

  it('project severities apply: a warning raised to error changes the exit code; off removes it', async () => {
    const root = tree({ 'noiselint.project.yaml': 'rules:\n  terminal-snr-leak: error\n', 'leaky.yaml': LEAKY_V });
    const raised = await runCli(['check'], root);
    expect(raised.code).toBe(1);
    expect(raised.stdout).toMatch(/leaky\.yaml:\d+:\d+: error: .*\(noiselint rules terminal-snr-leak\)$/m);
    const off = tree({ 'noiselint.project.yaml': 'rules:\n  terminal-snr-leak: off\n', 'leaky.yaml': LEAKY_V });
    expect((await runCli(['check'], off)).stdout).toBe('No findings in 1 file checked.\n');
  });
});

describe('check: pairing', () => {
  const training = CLEAN;
  // The sampling file was copied from an older, leaky run: it writes the rescale flag off.
  const sampling = `scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: false
  prediction_type: v_prediction
  timestep_spacing: trailing
sampling:
  num_inference_steps: 30
`;

  it('an explicit pair across folders reports the mismatch with a related location in the partner', async () => {
    const root = tree({
      'noiselint.project.yaml': 'pairs:\n  - training: train/run.yaml\n    sampling: serve/sample.yaml\n',
      'train/run.yaml': training,
      'serve/sample.yaml': sampling,
    });
    const r = await runCli(['check', '--format', 'json'], root);
    const out = JSON.parse(r.stdout);
    const sample = out.files.find((f: { path: string }) => f.path === 'serve/sample.yaml');
    const mismatch = sample.findings.find((f: { rule: string }) => f.rule === 'train-sample-mismatch');
    expect(mismatch?.severity).toBe('error');
    expect(mismatch.related.some((x: { path: string }) => x.path === 'train/run.yaml')).toBe(true);
    // Messages name the partner as the user typed paths: relative to the current folder.
    expect(mismatch.message).not.toContain(root);
    expect(r.code).toBe(1);
  });

  it('without the pair there is no mismatch finding', async () => {
    const root = tree({ 'train/run.yaml': training, 'serve/sample.yaml': sampling });
    const out = JSON.parse((await runCli(['check', '--format', 'json'], root)).stdout);
    const rules = out.files.flatMap((f: { findings: { rule: string }[] }) => f.findings.map((x) => x.rule));
    expect(rules).not.toContain('train-sample-mismatch');
  });

  it('a pair path that leaves the project is ignored with a one-line warning', async () => {
    const root = tree({
      'proj/noiselint.project.yaml': 'pairs:\n  - training: run.yaml\n    sampling: ../outside.yaml\n',
      'proj/run.yaml': training,
      'outside.yaml': sampling,
    });
    const r = await runCli(['check', 'proj'], root);
    expect(r.stderr).toBe(
      'noiselint check: warning: proj/noiselint.project.yaml: pairs[0].sampling: "../outside.yaml" leaves the project folder; pair ignored\n',
    );
    expect(r.code).toBe(0);
  });

  it('reads each file once (pairing and the check share the reading) and finds what a separate check of each file finds', async () => {
    // The demo pair (a training file and a sampling file that disagree), three times over: pairs by name.
    const demo = (name: string) => readFileSync(join(__dirname, '../../examples/night-storyboards', name), 'utf8');
    const files: Record<string, string> = {};
    for (const take of ['dusk', 'dawn', 'tide']) {
      files[`night/train-${take}.yaml`] = demo('train-finetune.yaml');
      files[`night/sample-${take}.yaml`] = demo('sample-leading.yaml');
    }
    files['night/leaky.yaml'] = LEAKY_V;
    const root = tree(files);
    const reads = new Map<string, number>();
    const counting: WorkspaceFs = {
      ...nodeFs,
      readBytes(path) {
        reads.set(path, (reads.get(path) ?? 0) + 1);
        return nodeFs.readBytes(path);
      },
    };
    clearProjectCache(counting);
    let stdout = '';
    const io: CliIO = { cwd: root, stdout: (t) => void (stdout += t), stderr: () => undefined, isTTY: false, env: {} };
    expect(await check(parseCheckArgs(['--format', 'json']), io, counting)).toBe(1);
    expect([...reads.keys()].sort()).toEqual(
      Object.keys(files)
        .map((f) => join(root, f))
        .sort(),
    );
    expect([...reads.values()].every((n) => n === 1)).toBe(true);

    // The same findings as analysing each file on its own (fresh parse) with the partners pairing gives.
    clearProjectCache();
    const out = JSON.parse(stdout) as { files: { path: string; findings: { rule: string; severity: string; message: string }[] }[] };
    const session = new WorkspaceSession({ fs: nodeFs, stableTree: true, showPath: (p) => p.slice(root.length + 1) });
    for (const rel of Object.keys(files)) {
      const path = join(root, rel);
      const project = loadProject(path);
      const pairing = session.partnersOf(path, project);
      const alone = analyzeText(files[rel]!, { path, project, partners: pairing.partners, pairRole: pairing.pairRole });
      const reported = out.files.find((f) => f.path === rel)!.findings;
      expect(reported.map((f) => `${f.rule} ${f.severity} ${f.message}`)).toEqual(alone.findings.map((f) => `${f.rule} ${f.severity} ${f.message}`));
    }
    const rules = out.files.flatMap((f) => f.findings.map((x) => x.rule));
    expect(rules.filter((r) => r === 'train-sample-mismatch')).toHaveLength(3);
    expect(rules).toContain('terminal-snr-leak');
  });
});

describe('check: what the report keeps', () => {
  it("findings as data: equal to the engine's, but no fix still points at the parse it came from", () => {
    const result = analyzeText(LEAKY_V, { path: 'leaky.yaml' });
    const fixes = result.findings.flatMap((f) => f.fixes);
    expect(fixes.length).toBeGreaterThan(0);
    // The engine ties each fix to its parse (for code actions); that would keep every file's tree.
    expect(fixes.every((x) => originOf(x) !== undefined)).toBe(true);
    const data = findingsAsData(result.findings);
    expect(data).toEqual(result.findings);
    expect(data.flatMap((f) => f.fixes).every((x) => originOf(x) === undefined)).toBe(true);
  });
});
