import { describe, expect, it } from 'vitest';
import { main } from '../../server/src/cli/main';
import type { CliIO } from '../../server/src/cli/io';
import { RULE_IDS, getRuleMeta } from '../../server/src/rules';

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const io: CliIO = { cwd: process.cwd(), stdout: (t) => void (out += t), stderr: (t) => void (err += t), isTTY: false, env: {} };
  const code = await main(['rules', ...args], io);
  return { code, out, err };
}

describe('noiselint rules', () => {
  it('lists the 17 rules and the engine ids with default severity and what their repair does', async () => {
    const { code, out, err } = await run([]);
    expect(code).toBe(0);
    expect(err).toBe('');
    const lines = out.trimEnd().split('\n');
    expect(lines).toHaveLength(1 + RULE_IDS.length + 2);
    expect(lines[0]).toMatch(/^rule\s+default\s+repair\s+what it finds$/);
    for (const id of [...RULE_IDS, 'parse-error', 'unknown-rule-in-comment']) {
      const meta = getRuleMeta(id)!;
      const line = lines.find((l) => l.startsWith(`${id} `));
      expect(line, id).toBeDefined();
      expect(line).toContain(` ${meta.defaultSeverity} `);
      expect(line).toContain(meta.summary);
    }
    expect(lines.find((l) => l.startsWith('epsilon-at-zero-snr '))).toMatch(/ error +needs retraining +/);
    expect(lines.find((l) => l.startsWith('sampler-skips-last-step '))).toMatch(/ sampling only +/);
    expect(lines.find((l) => l.startsWith('unknown-value '))).toMatch(/ sampling only, some findings +/);
    expect(lines.find((l) => l.startsWith('resolution-shift-hint '))).toMatch(/ info +none +/);
  });

  it("prints one rule's documentation", async () => {
    const { code, out } = await run(['terminal-snr-leak']);
    expect(code).toBe(0);
    expect(out).toContain('terminal-snr-leak: The last training step still carries signal');
    expect(out).toContain('## What the run loses');
    expect(out).toContain('## Effect on a trained checkpoint');
    expect(out).toContain('repair: needs retraining, some findings');
    expect(out).not.toMatch(/Why it matters|Use instead|Fix safety/);
    expect(out).toContain('```yaml');
  });

  it('refuses an unknown id with one line and exit code 2', async () => {
    const { code, out, err } = await run(['terminal-snr-leek']);
    expect(code).toBe(2);
    expect(out).toBe('');
    expect(err.trimEnd().split('\n')).toHaveLength(1);
    expect(err).toContain('unknown rule "terminal-snr-leek"');
  });

  it('refuses extra arguments and unknown options', async () => {
    expect((await run(['a', 'b'])).code).toBe(2);
    expect((await run(['--frobnicate'])).code).toBe(2);
  });
});
