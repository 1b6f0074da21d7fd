/** The usage text names the project's own flags, and the old ones are refused. */
import { describe, expect, it } from 'vitest';
import { main } from '../../server/src/cli/main';
import type { CliIO } from '../../server/src/cli/io';

async function run(argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIO = { cwd: process.cwd(), stdout: (t) => void (out += t), stderr: (t) => void (err += t), isTTY: false, env: {} };
  const code = await main(argv, io);
  return { code, out, err };
}

describe('noiselint --help', () => {
  it('lists check with --show and --budget, and fix with the consents it asks for', async () => {
    const { code, out } = await run(['--help']);
    expect(code).toBe(0);
    expect(out).toMatch(/^ {2}noiselint check /m);
    expect(out).toMatch(/^ {2}noiselint fix /m);
    const check = await run(['check', '--help']);
    expect(check.code).toBe(0);
    expect(check.out).toMatch(/^ +--show <severity> /m);
    expect(check.out).toMatch(/^ +--budget <severity=N> /m);
    expect(check.out).toMatch(/^ +--workers <N> +Threads .*default: the available cores/m);
    const fix = await run(['fix', '--help']);
    expect(fix.out).toMatch(/^ +--accept-retraining /m);
    expect(fix.out).toMatch(/^ +--accept-comment-edits /m);
    expect(fix.out).toMatch(/^ *-n, --dry-run /m);
    for (const text of [out, check.out, fix.out]) expect(text).not.toMatch(/--unsafe|--quiet|--max-warnings/);
  });

  it('refuses the flags it no longer has, in one line with exit code 2', async () => {
    for (const argv of [
      ['fix', '--unsafe', '.'],
      ['check', '--quiet'],
      ['check', '--max-warnings', '0'],
    ]) {
      const r = await run(argv);
      expect(r.code, argv.join(' ')).toBe(2);
      expect(r.err.trim().split('\n'), argv.join(' ')).toHaveLength(1);
    }
  });
});
