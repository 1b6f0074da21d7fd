import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { formatText } from '../../server/src/cli/output/text';
import { removeTree } from '../workspace/helpers';
import { CLEAN, FEW_STEPS_LINSPACE, LEAKY_V, ZERO_SNR_EPSILON, runCli, tempTree } from './check-helpers';

const roots: string[] = [];
function tree(files: Record<string, string | Uint8Array>): string {
  const root = tempTree(files);
  roots.push(root);
  return root;
}
afterEach(() => {
  while (roots.length) removeTree(roots.pop()!);
});

/** Finding lines of the text output: `path:line:col severity rule message`. */
function findingLines(stdout: string): { path: string; line: number; col: number; severity: string; rule: string; message: string }[] {
  return stdout
    .split('\n')
    .map((l) => /^(\S+?):(\d+):(\d+): (error|warning|info|hint): (.+) \(noiselint rules ([a-z0-9-]+)\)$/.exec(l))
    .filter((m): m is RegExpExecArray => m !== null)
    .map((m) => ({ path: m[1]!, line: Number(m[2]), col: Number(m[3]), severity: m[4]!, message: m[5]!, rule: m[6]! }));
}

describe('check: text output', () => {
  it('prints one line per finding with 1-based positions, then a summary', async () => {
    const root = tree({ 'runs/leaky.yaml': LEAKY_V, 'runs/clean.yaml': CLEAN });
    const r = await runCli(['check'], root);
    expect(r.code).toBe(0); // warnings only, no limit
    const lines = findingLines(r.stdout);
    expect(lines.map((l) => [l.path, l.severity, l.rule])).toEqual([['runs/leaky.yaml', 'warning', 'terminal-snr-leak']]);
    // The finding points into the schedule block (lines 1-6 of the file), at a real column.
    expect(lines[0]!.line).toBeGreaterThanOrEqual(1);
    expect(lines[0]!.line).toBeLessThanOrEqual(6);
    expect(lines[0]!.col).toBeGreaterThanOrEqual(1);
    // The message carries the number: signal amplitude about 0.068 (Lin et al. 2023, Table 1, from memory).
    expect(lines[0]!.message).toMatch(/0\.068/);
    const summary = r.stdout.trim().split('\n').at(-1)!;
    expect(summary).toMatch(/^1 warning in 2 files checked/);
    expect(r.stderr).toBe('');
    // The whole line, GNU style, the rule id closing it inside the command that explains it.
    const [first] = r.stdout.split('\n');
    expect(first).toBe(`runs/leaky.yaml:${lines[0]!.line}:${lines[0]!.col}: warning: ${lines[0]!.message} (noiselint rules terminal-snr-leak)`);
  });

  it("the extension's problem matcher reads every finding line", async () => {
    const pkg = JSON.parse(readFileSync(join(__dirname, '..', '..', 'client', 'package.json'), 'utf8'));
    const matcher = pkg.contributes.problemMatchers.find((m: { name: string }) => m.name === 'noiselint');
    const { regexp, file, line, column, severity, message, code } = matcher.pattern;
    const root = tree({ 'runs/leaky.yaml': LEAKY_V, 'eps.yaml': ZERO_SNR_EPSILON, 'few.yaml': FEW_STEPS_LINSPACE });
    const r = await runCli(['check'], root);
    const expected = findingLines(r.stdout);
    expect(expected.length).toBeGreaterThan(2);
    const re = new RegExp(regexp);
    const matched = r.stdout
      .split('\n')
      .map((l) => re.exec(l))
      .filter((m): m is RegExpExecArray => m !== null);
    expect(
      matched.map((m) => ({
        path: m[file],
        line: Number(m[line]),
        col: Number(m[column]),
        severity: m[severity],
        message: m[message],
        rule: m[code],
      })),
    ).toEqual(expected);
  });

  it('reports no findings on clean files and exits 0', async () => {
    const root = tree({ 'a.yaml': CLEAN, 'package.json': '{ "name": "not-a-config" }' });
    const r = await runCli(['check', '.'], root);
    expect(r.code).toBe(0);
    expect(findingLines(r.stdout)).toEqual([]);
    // package.json names no schedule or step-count key: it is passed over, not parsed.
    expect(r.stdout).toMatch(/^No findings in 1 file checked, 1 other file passed over \(no schedule or step-count key\)\.\n$/);
  });

  it('exits 1 on an error', async () => {
    const root = tree({ 'eps.yaml': ZERO_SNR_EPSILON });
    const r = await runCli(['check', 'eps.yaml'], root);
    expect(r.code).toBe(1);
    expect(findingLines(r.stdout).map((l) => [l.severity, l.rule])).toContainEqual(['error', 'epsilon-at-zero-snr']);
  });

  it('--budget <severity>=N: exit 1 only when more than N findings at or above it', async () => {
    const root = tree({ 'a.yaml': LEAKY_V, 'b.yaml': LEAKY_V });
    expect((await runCli(['check'], root)).code).toBe(0);
    expect((await runCli(['check', '--budget', 'warning=2'], root)).code).toBe(0);
    const over = await runCli(['check', '--budget=warning=1'], root);
    expect(over.code).toBe(1);
    expect(over.stdout).toContain('Over budget: 2 findings at warning or above, 1 may pass (--budget warning=1).');
    expect((await runCli(['check', '--budget', 'warning=0'], root)).code).toBe(1);
    // An error budget replaces the built-in "no error passes".
    const eps = tree({ 'eps.yaml': ZERO_SNR_EPSILON });
    expect((await runCli(['check'], eps)).code).toBe(1);
    expect((await runCli(['check', '--budget', 'error=1'], eps)).code).toBe(0);
    // Errors still fail under a warning budget (the built-in error budget stays).
    expect((await runCli(['check', '--budget', 'warning=9'], eps)).code).toBe(1);
  });

  it('--show error lists errors only, says what it left out, and the others still count', async () => {
    const root = tree({ 'eps.yaml': ZERO_SNR_EPSILON, 'leaky.yaml': LEAKY_V });
    const r = await runCli(['check', '--show', 'error'], root);
    expect(r.code).toBe(1);
    const lines = findingLines(r.stdout);
    expect(lines.length).toBeGreaterThan(0);
    expect(lines.every((l) => l.severity === 'error')).toBe(true);
    expect(r.stdout).toMatch(/1 warning[^\n]*not listed: --show error/);

    const onlyWarnings = tree({ 'leaky.yaml': LEAKY_V });
    const q = await runCli(['check', '--show', 'error'], onlyWarnings);
    expect(q.code).toBe(0);
    expect(findingLines(q.stdout)).toEqual([]);
    expect(q.stdout).toMatch(/^1 warning in 1 file checked \(1 warning not listed: --show error\)/m);
    const limited = await runCli(['check', '--show', 'error', '--budget', 'warning=0'], onlyWarnings);
    expect(limited.code).toBe(1);
    expect(limited.stdout).toMatch(/not listed: --show error/);
    expect(limited.stdout).toContain('Over budget: 1 finding at warning or above, 0 may pass');
  });

  it('--show warning hides infos and hints only', async () => {
    const root = tree({ 'few.yaml': FEW_STEPS_LINSPACE, 'leaky.yaml': LEAKY_V });
    const r = await runCli(['check', '--show', 'warning'], root);
    expect(findingLines(r.stdout).map((l) => l.severity)).toEqual(['warning']);
    expect(r.stdout).toMatch(/1 info not listed: --show warning/);
  });

  it('an info finding alone keeps exit code 0 and is shown as info', async () => {
    const root = tree({ 'few.yaml': FEW_STEPS_LINSPACE });
    const r = await runCli(['check'], root);
    expect(r.code).toBe(0);
    expect(findingLines(r.stdout).map((l) => [l.severity, l.rule])).toEqual([['info', 'few-steps-linspace']]);
  });

  it('colours only on a terminal with NO_COLOR unset or empty', async () => {
    const root = tree({ 'leaky.yaml': LEAKY_V });
    const esc = '\x1b[';
    expect((await runCli(['check'], root, { isTTY: false })).stdout).not.toContain(esc);
    expect((await runCli(['check'], root, { isTTY: true })).stdout).toContain(`${esc}33mwarning`);
    expect((await runCli(['check'], root, { isTTY: true, env: { NO_COLOR: '1' } })).stdout).not.toContain(esc);
    expect((await runCli(['check'], root, { isTTY: true, env: { NO_COLOR: '' } })).stdout).toContain(esc);
  });

  it('shows progress on stderr for long runs on a terminal only', async () => {
    const files: Record<string, string> = {};
    for (let i = 0; i < 22; i++) files[`c${String(i).padStart(2, '0')}.yaml`] = CLEAN;
    const root = tree(files);
    // stderr decides, whatever stdout is (a file or a pipe here).
    const tty = await runCli(['check'], root, { isTTY: false, stderrIsTTY: true });
    expect(tty.stderr).toContain('checking 22/22');
    expect((await runCli(['check'], root, { isTTY: true, stderrIsTTY: false })).stderr).toBe('');
  });

  it('bad arguments are one-line usage errors with exit code 2', async () => {
    const root = tree({});
    for (const args of [
      ['--format', 'xml'],
      ['--budget', 'warning=-1'],
      ['--budget', 'warning=many'],
      ['--budget', '3'],
      ['--budget', 'loud=3'],
      ['--budget', 'warning=1', '--budget', 'warning=2'],
      ['--show', 'everything'],
      ['--max-warnings', '0'],
      ['--quiet'],
      ['--frobnicate'],
    ]) {
      const r = await runCli(['check', ...args], root);
      expect(r.code).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr.trim().split('\n')).toHaveLength(1);
      expect(r.stderr).toMatch(/^noiselint check: /);
    }
  });

  it('control characters in messages and paths never reach the terminal', () => {
    // A message that echoes a value could carry ESC sequences; the text output replaces them.
    const text = 'a: 1\n';
    const out = formatText(
      {
        cwd: '/w',
        files: [
          {
            path: '/w/odd\x07name.yaml',
            text,
            isDiffusionConfig: true,
            findings: [
              {
                rule: 'unknown-value',
                severity: 'error',
                message: 'value "x\x1b[31my" is\nnot known',
                span: { start: 0, end: 1 },
                documentIndex: 0,
                related: [],
                fixes: [],
              },
            ],
          },
        ],
        skipped: [],
        otherTexts: new Map(),
        notices: [],
      },
      { color: false },
    );
    expect(out.split('\n')[0]).toBe('odd\\u0007name.yaml:1:1: error: value "x\\u001B[31my" is not known (noiselint rules unknown-value)');
    expect(out).not.toMatch(/[\u0000-\u0008\u000b-\u001f]/);
  });
});
