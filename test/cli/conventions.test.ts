/**
 * Command-line conventions: per-command help, unknown options, short forms, standard input,
 * colour, never green on nothing checked, UTF-16 files, fix --dry-run as a gate, the closing hint,
 * the JSON report's version and unchecked paths, and the annotations format.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { CHECK_SPEC } from '../../server/src/cli/commands/check';
import { EXPLAIN_SPEC } from '../../server/src/cli/commands/explain';
import { FIX_SPEC } from '../../server/src/cli/commands/fix';
import { LSP_SPEC } from '../../server/src/cli/commands/lsp';
import { RULES_SPEC } from '../../server/src/cli/commands/rules';
import { escapeData, escapeProperty } from '../../server/src/cli/output/annotations';
import { VERSION } from '../../server/src/base/version';
import { removeTree } from '../workspace/helpers';
import { CLEAN, LEAKY_V, ZERO_SNR_EPSILON, runCli, tempTree } from './check-helpers';

const roots: string[] = [];
function tree(files: Record<string, string | Uint8Array>): string {
  const root = tempTree(files);
  roots.push(root);
  return root;
}
afterEach(() => {
  while (roots.length) removeTree(roots.pop()!);
});

/** Leading spacing, 30 steps, on a leaky schedule: a sampling-only fix (spacing -> trailing) and ones that need retraining. */
const NIGHT = `# Lanternfish Pictures: night storyboard sampler
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: v_prediction
  timestep_spacing: leading
sampling:
  num_inference_steps: 30
`;

const SPECS = [CHECK_SPEC, FIX_SPEC, EXPLAIN_SPEC, RULES_SPEC, LSP_SPEC];

describe('--help per command', () => {
  for (const spec of SPECS) {
    it(`noiselint ${spec.name} --help prints usage, every option and the exit codes, exit 0`, async () => {
      const root = tree({});
      for (const args of [
        [spec.name, '--help'],
        [spec.name, '-h'],
        ['help', spec.name],
        [spec.name, 'x.yaml', '--bogus', '--help'],
      ]) {
        const r = await runCli(args, root);
        expect(r.code, args.join(' ')).toBe(0);
        expect(r.stderr).toBe('');
        expect(r.stdout.split('\n')[0]).toBe(`Usage: noiselint ${spec.name} ${spec.usage}`);
        for (const o of spec.options) expect(r.stdout).toContain(`--${o.name}`);
        expect(r.stdout).toMatch(/^Exit codes:$/m);
        for (const [code] of spec.exitCodes) expect(r.stdout).toMatch(new RegExp(`^  ${code}  `, 'm'));
      }
    });
  }

  it('noiselint --help lists every command', async () => {
    const r = await runCli(['--help'], tree({}));
    expect(r.code).toBe(0);
    for (const spec of SPECS) expect(r.stdout).toMatch(new RegExp(`^  noiselint ${spec.name} +${spec.summary.slice(0, 20)}`, 'm'));
  });
});

describe('unknown options and short forms', () => {
  const cases: [string[], string][] = [
    [['check', '--formt', 'json'], '--format'],
    [['check', '--shwo', 'error'], '--show'],
    [['check', '--budgets', 'warning=3'], '--budget'],
    [['check', '--colour', 'never'], '--color'],
    [['fix', '--dryrun'], '--dry-run'],
    [['fix', '--accept-retrain'], '--accept-retraining'],
    [['fix', '--accept-comments'], '--accept-comment-edits'],
    [['explain', '--fromat', 'json', 'a.yaml'], '--format'],
    [['rules', '--hepl'], '--help'],
  ];
  for (const [args, closest] of cases) {
    it(`${args.join(' ')}: one line naming ${closest}, exit 2`, async () => {
      const r = await runCli(args, tree({}));
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      const lines = r.stderr.trimEnd().split('\n');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(new RegExp(`^noiselint ${args[0]}: unknown option ${args[1]}; the closest is (-., )?${closest} `));
    });
  }

  it('an unknown command names the closest one', async () => {
    const r = await runCli(['chek'], tree({}));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^noiselint: unknown command "chek"; the closest command is check /);
  });

  it('short forms: -f for check and explain; -n for fix', async () => {
    const root = tree({ 'eps.yaml': ZERO_SNR_EPSILON, 'leaky.yaml': LEAKY_V });
    const json = await runCli(['check', '-f', 'json', '--show', 'error'], root);
    const out = JSON.parse(json.stdout);
    expect(out.files.flatMap((f: { findings: { severity: string }[] }) => f.findings.map((x) => x.severity))).toEqual(['error']);
    expect(json.code).toBe(1);
    const night = tree({ 'night.yaml': NIGHT });
    const dry = await runCli(['fix', '-n'], night);
    expect(dry.stdout).toMatch(/^\+ {2}timestep_spacing: trailing$/m);
    expect(readFileSync(join(night, 'night.yaml'), 'utf8')).toBe(NIGHT);
    const explained = await runCli(['explain', '-f', 'json', 'night.yaml'], night);
    expect(explained.code).toBe(0);
    expect(JSON.parse(explained.stdout)).toBeTruthy();
  });

  it('a value that is missing or not among the choices is one line', async () => {
    const root = tree({ 'a.yaml': CLEAN });
    const missing = await runCli(['check', '--format'], root);
    expect(missing.stderr).toBe('noiselint check: --format needs a value (text|json|sarif|annotations)\n');
    const wrong = await runCli(['check', '--color', 'sometimes'], root);
    expect(wrong.stderr).toBe('noiselint check: --color must be auto, always or never, not "sometimes"\n');
    const http = await runCli(['check', '--docs-base', 'http://docs.lanternfish.example/rules'], root);
    expect(http.stderr).toMatch(/^noiselint check: --docs-base must be an https URL/);
    expect([missing.code, wrong.code, http.code]).toEqual([2, 2, 2]);
  });
});

describe('standard input', () => {
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

  it('`-` with --as: pairing and the project file follow the given path', async () => {
    const root = tree({
      'noiselint.project.yaml': 'pairs:\n  - training: train/run.yaml\n    sampling: serve/sample.yaml\n',
      'train/run.yaml': CLEAN,
    });
    // serve/sample.yaml does not exist on disk: the text comes from standard input.
    const r = await runCli(['check', '-', '--as', 'serve/sample.yaml', '-f', 'json'], root, { stdin: sampling });
    const out = JSON.parse(r.stdout);
    expect(out.files.map((f: { path: string }) => f.path)).toEqual(['serve/sample.yaml']);
    const mismatch = out.files[0].findings.find((f: { rule: string }) => f.rule === 'train-sample-mismatch');
    expect(mismatch?.related.some((x: { path: string }) => x.path === 'train/run.yaml')).toBe(true);
    expect(r.code).toBe(1);

    // The project file of the named folder applies: the rule turned off there is off.
    const again = tree({ 'sub/noiselint.project.yml': 'rules:\n  terminal-snr-leak: off\n' });
    const quiet = await runCli(['check', '-', '--as', 'sub/leaky.yaml', '-f', 'json'], again, { stdin: LEAKY_V });
    expect(JSON.parse(quiet.stdout).files[0].findings).toEqual([]);
    expect(quiet.code).toBe(0);
  });

  it('`-` alone reads as <stdin>; --as without `-` is refused', async () => {
    const root = tree({});
    const r = await runCli(['check', '-'], root, { stdin: LEAKY_V });
    expect(r.stdout).toMatch(/^<stdin>:3:\d+: warning: .*\(noiselint rules terminal-snr-leak\)$/m);
    expect(r.code).toBe(0);
    const bad = await runCli(['check', '--as', 'x.yaml'], root);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/^noiselint check: --as names the file on standard input/);
    const explained = await runCli(['explain', '-', '--as', 'night.yaml'], root, { stdin: NIGHT });
    expect(explained.code).toBe(0);
    expect(explained.stdout).toMatch(/night\.yaml/);
  });
});

describe('colour', () => {
  const cases: [string, { isTTY: boolean; env?: Record<string, string>; args?: string[] }, boolean][] = [
    ['a terminal', { isTTY: true }, true],
    ['a pipe', { isTTY: false }, false],
    ['NO_COLOR on a terminal', { isTTY: true, env: { NO_COLOR: '1' } }, false],
    ['an empty NO_COLOR', { isTTY: true, env: { NO_COLOR: '' } }, true],
    ['FORCE_COLOR into a pipe', { isTTY: false, env: { FORCE_COLOR: '1' } }, true],
    ['FORCE_COLOR=0 on a terminal', { isTTY: true, env: { FORCE_COLOR: '0' } }, false],
    ['TERM=dumb', { isTTY: true, env: { TERM: 'dumb' } }, false],
    ['--color always into a pipe with NO_COLOR', { isTTY: false, env: { NO_COLOR: '1' }, args: ['--color', 'always'] }, true],
    ['--color never with FORCE_COLOR', { isTTY: true, env: { FORCE_COLOR: '1' }, args: ['--color=never'] }, false],
  ];
  for (const [label, o, coloured] of cases) {
    it(`${label}: ${coloured ? 'colour' : 'no colour'}`, async () => {
      const root = tree({ 'leaky.yaml': LEAKY_V });
      const r = await runCli(['check', ...(o.args ?? [])], root, { isTTY: o.isTTY, env: o.env ?? {} });
      expect(r.stdout.includes('\x1b[')).toBe(coloured);
    });
  }
});

describe('never green on nothing checked', () => {
  it('a folder with no diffusion config is exit 2 with one line; --empty-ok accepts it', async () => {
    const root = tree({ 'notes.yaml': 'title: storyboard notes\n', 'ci/lint.yml': 'on: push\n' });
    const r = await runCli(['check'], root, { env: { FORCE_COLOR: '1' } });
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(
      'noiselint check: .: no diffusion config found (2 files read, none is a training or sampling config); --empty-ok accepts that\n',
    );
    expect(r.stdout).not.toContain('\x1b[32m');
    expect(r.stdout).toMatch(/^No diffusion configs found: nothing checked \(2 files read\)\.$/m);
    const ok = await runCli(['check', '--empty-ok'], root);
    expect(ok.code).toBe(0);
    expect(ok.stderr).toBe('');
  });

  it('each input must hold a config: the one that does not is named', async () => {
    const root = tree({ 'runs/leaky.yaml': LEAKY_V, 'docs/notes.yaml': 'title: notes\n', 'empty/.keep': '' });
    const r = await runCli(['check', 'runs', 'docs', 'empty'], root);
    expect(r.code).toBe(2);
    expect(r.stderr.trimEnd().split('\n')).toEqual([
      'noiselint check: docs: no diffusion config found (1 file read, none is a training or sampling config); --empty-ok accepts that',
      'noiselint check: empty: no diffusion config found (no config files); --empty-ok accepts that',
    ]);
    expect(r.stdout).toMatch(/runs\/leaky\.yaml:\d+:\d+: warning: .*\(noiselint rules terminal-snr-leak\)/);
  });

  it('a named binary file, or a named file of another type, is an error with its reason', async () => {
    const root = tree({ 'weights.json': new Uint8Array([0x7b, 0x00, 0x7d]), 'run.toml.txt': 'steps = 1\n', 'leaky.yaml': LEAKY_V });
    const r = await runCli(['check', 'weights.json', 'run.toml.txt', 'leaky.yaml', '-f', 'json'], root);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('noiselint check: run.toml.txt: not a file type noiselint reads (.yaml, .yml, .json, .jsonc, .toml)\n');
    expect(r.stderr).toContain('noiselint check: weights.json: skipped: looks binary (contains NUL bytes)\n');
    const out = JSON.parse(r.stdout);
    expect(out.tool).toEqual({ name: 'noiselint', version: VERSION });
    expect(out.unchecked).toEqual([
      { path: 'run.toml.txt', reason: 'not a file type noiselint reads (.yaml, .yml, .json, .jsonc, .toml)' },
      { path: 'weights.json', reason: 'skipped: looks binary (contains NUL bytes)' },
    ]);
    expect(out.files.map((f: { path: string }) => f.path)).toEqual(['leaky.yaml']);
  });

  it('the JSON report lists unreadable and missing paths with the reason', async () => {
    const root = tree({ 'leaky.yaml': LEAKY_V });
    const out = JSON.parse((await runCli(['check', 'leaky.yaml', 'gone.yaml', '-f', 'json'], root)).stdout);
    expect(out.unchecked).toEqual([{ path: 'gone.yaml', reason: 'no such file or folder' }]);
  });
});

describe('UTF-16 with a byte-order mark', () => {
  const utf16le = (s: string) => Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(s, 'utf16le')]);
  const utf16be = (s: string) => Buffer.concat([Buffer.from([0xfe, 0xff]), Buffer.from(s, 'utf16le').swap16()]);

  it('is decoded and checked, little- and big-endian', async () => {
    const root = tree({ 'le.yaml': utf16le(LEAKY_V), 'be.yaml': utf16be(LEAKY_V) });
    const out = JSON.parse((await runCli(['check', '-f', 'json', 'le.yaml', 'be.yaml'], root)).stdout);
    for (const file of out.files) {
      const leak = file.findings.find((f: { rule: string }) => f.rule === 'terminal-snr-leak');
      // Lin et al. 2023, Table 1 (recalled from memory): sqrt(abar_T) = 0.068 for scaled linear 0.00085 -> 0.012.
      expect(leak.message, file.path).toMatch(/0\.068\b/);
      // Line 2 (0-based; a compact range starts with the line) holds beta_schedule; the BOM does not shift lines.
      expect(leak.range[0]).toBe(2);
    }
    expect(out.unchecked).toEqual([]);
  });

  it('fix writes the file back in UTF-16 with its BOM', async () => {
    const root = tree({ 'night.yaml': utf16be(NIGHT) });
    const r = await runCli(['fix', 'night.yaml'], root);
    expect(r.code).toBe(0);
    const bytes = readFileSync(join(root, 'night.yaml'));
    expect([...bytes.subarray(0, 2)]).toEqual([0xfe, 0xff]);
    expect(Buffer.from(bytes.subarray(2)).swap16().toString('utf16le')).toBe(
      NIGHT.replace('timestep_spacing: leading', 'timestep_spacing: trailing'),
    );
  });
});

describe('fix --dry-run as a gate, and the closing hint', () => {
  it('exit 1 while changes are pending, 0 once there are none', async () => {
    const root = tree({ 'night.yaml': NIGHT });
    expect((await runCli(['fix', '--dry-run'], root)).code).toBe(1);
    expect((await runCli(['fix'], root)).code).toBe(0);
    const after = await runCli(['fix', '--dry-run'], root);
    expect(after.code).toBe(0);
    expect(after.stdout).toBe('');
  });

  it('counts only findings that a plain `noiselint fix` would fix', async () => {
    // LEAKY_V: the leak's only fix rescales the schedule (it needs fine-tuning: not without consent).
    const retrainOnly = await runCli(['check'], tree({ 'leaky.yaml': LEAKY_V }));
    expect(retrainOnly.stdout).toMatch(/1 warning in 1 file checked\.$/m);
    expect(retrainOnly.stdout).not.toMatch(/fixable/);
    // NIGHT: the spacing fix is sampling-only; the leak's rescale is not.
    const night = await runCli(['check'], tree({ 'night.yaml': NIGHT }));
    expect(night.stdout).toMatch(/; 1 fixable by noiselint fix \(--dry-run shows the changes\)\.$/m);
  });
});

describe('--format annotations', () => {
  it('one workflow command per finding, 1-based, with the rule as title', async () => {
    const root = tree({ 'runs/eps.yaml': ZERO_SNR_EPSILON });
    const r = await runCli(['check', '-f', 'annotations'], root);
    expect(r.code).toBe(1);
    const lines = r.stdout.trimEnd().split('\n');
    const eps = lines.find((l) => l.includes('title=noiselint epsilon-at-zero-snr'))!;
    // Line 7 (1-based) holds `prediction_type: epsilon`.
    expect(eps).toMatch(/^::error file=runs\/eps\.yaml,line=7,endLine=7,col=\d+,endColumn=\d+,title=noiselint epsilon-at-zero-snr::\S/);
    expect(lines[lines.length - 1]).toMatch(/^noiselint: 1 errors, \d+ warnings, \d+ notes in 1 configs checked \(1 files read\)\.$/);
  });

  it('escapes what would end a command early', () => {
    expect(escapeData('50% of steps\nskipped\r')).toBe('50%25 of steps%0Askipped%0D');
    expect(escapeProperty('a:b,c.yaml')).toBe('a%3Ab%2Cc.yaml');
  });
});
