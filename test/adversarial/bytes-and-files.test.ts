/**
 * Byte-level and file-system attacks through the real CLI (which reads bytes): binary garbage,
 * invalid UTF-8, special files (a FIFO, /dev/zero), a hostile project file, and the limits set in
 * the project file. Each run ends by itself (no hang, no crash, no stack trace) with a one-line
 * message, and never rewrites a file it could not read.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { MB, describeCrash, ensureCliBuilt, expectSpansInside, runCli, removeTempDirs, tempDir } from './helpers';

/** Deterministic pseudo-random bytes (a 32-bit LCG; the exact generator does not matter). */
function garbage(n: number, seed: number): Buffer {
  const b = Buffer.alloc(n);
  let x = seed >>> 0;
  for (let i = 0; i < n; i++) {
    x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
    b[i] = x >>> 24;
  }
  return b;
}

const VALID = 'num_train_timesteps: 1000\nbeta_schedule: linear\ntimestep_spacing: leading\nnum_inference_steps: 10\n';

describe('adversarial bytes and files', () => {
  afterAll(removeTempDirs);
  beforeAll(() => ensureCliBuilt());

  it('binary garbage: analyzeText copes in process; the CLI skips it with one line', () => {
    const bytes = garbage(256 * 1024, 7);
    const asText = bytes.toString('latin1');
    for (const format of ['yaml', 'json', 'jsonc'] as const) {
      const result = analyzeText(asText, { path: `garbage.${format}`, format });
      expectSpansInside(result, asText);
    }
    const dir = tempDir('garbage');
    const file = join(dir, 'garbage.yaml');
    writeFileSync(file, bytes);
    for (const command of ['check', 'explain', 'fix']) {
      const r = runCli([command, file], { heapMb: 128 });
      expect(describeCrash(r), command).toBeNull();
      expect(r.stdout + r.stderr, command).toMatch(/binary|UTF-8|skipped/i);
    }
    expect(readFileSync(file).equals(bytes)).toBe(true);
  });

  it('invalid UTF-8 through the CLI: reported in one line, the file is never rewritten', () => {
    const dir = tempDir('utf8');
    const file = join(dir, 'night.yaml');
    // 0xFF never appears in UTF-8; 0xC3 0x28 is a broken two-byte sequence.
    const bytes = Buffer.concat([Buffer.from(VALID), Buffer.from([0x23, 0x20, 0xff, 0xfe, 0xc3, 0x28, 0x0a])]);
    writeFileSync(file, bytes);
    for (const args of [
      ['check', file],
      ['explain', file],
      ['fix', file],
      ['fix', '--accept-retraining', '--accept-comment-edits', file],
    ]) {
      const r = runCli(args, { heapMb: 128 });
      expect(describeCrash(r), args.join(' ')).toBeNull();
      // One line naming the problem. (`check` and `fix` count the file as skipped, exit 0.)
      const lines = (r.stdout + r.stderr).split('\n').filter((l) => /UTF-8/.test(l));
      expect(lines, args.join(' ')).toHaveLength(1);
      if (args[0] === 'explain') expect(r.status).toBe(2);
    }
    expect(readFileSync(file).equals(bytes)).toBe(true);
  });

  it('a FIFO and /dev/zero named on the command line: refused, no hang, no endless read', () => {
    const dir = tempDir('special');
    const fifo = join(dir, 'pipe.yaml');
    execFileSync('mkfifo', [fifo]);
    for (const command of ['check', 'explain', 'fix']) {
      for (const target of [fifo, '/dev/zero']) {
        // A hang guard, not a timing assertion: a run that needs the kill has hung on the read.
        const r = runCli([command, target], { heapMb: 96, killAfterMs: 20_000 });
        expect(describeCrash(r), `${command} ${target}`).toBeNull();
        expect(r.status, `${command} ${target}`).not.toBe(0);
      }
    }
  });

  it('a hostile project file (alias bomb, deep nesting, a FIFO in its place) is one line, not a crash', () => {
    const bombs: Record<string, string> = {
      'alias bomb': [
        'a0: &a0 [x, x, x, x, x, x, x, x, x]',
        ...Array.from({ length: 9 }, (_, i) => `a${i + 1}: &a${i + 1} [${Array(9).fill(`*a${i}`).join(', ')}]`),
        'include: *a9',
        '',
      ].join('\n'),
      'deep nesting': `limits: ${'['.repeat(100_000)}${']'.repeat(100_000)}\n`,
      'wrong types': 'limits: {maxFileBytes: .inf, maxNesting: -1}\nrules: 7\n',
    };
    for (const [name, content] of Object.entries(bombs)) {
      const dir = tempDir('project');
      writeFileSync(join(dir, 'noiselint.project.yaml'), content);
      writeFileSync(join(dir, 'train.yaml'), VALID);
      const r = runCli(['check', 'train.yaml'], { cwd: dir, heapMb: 128 });
      expect(describeCrash(r), name).toBeNull();
      expect(r.status, name).toBe(2);
      expect(r.stderr, name).toMatch(/noiselint\.project\.yaml/);
      expect(r.stderr.trim().split('\n').length, `${name}: ${r.stderr}`).toBeLessThanOrEqual(3);
    }
    // A code-constructing tag is plain data: the tagged list is read as the include patterns, so
    // exactly the one file it names is checked (other.yaml is not).
    const tagged = tempDir('project-tag');
    writeFileSync(join(tagged, 'noiselint.project.yaml'), 'include: !!python/object/apply:os.system ["train.yaml"]\n');
    writeFileSync(join(tagged, 'train.yaml'), VALID);
    writeFileSync(join(tagged, 'other.yaml'), VALID);
    const rTag = runCli(['check', '--format', 'json'], { cwd: tagged, heapMb: 128 });
    expect(describeCrash(rTag)).toBeNull();
    expect(rTag.status, rTag.stderr).toBe(0);
    expect((JSON.parse(rTag.stdout) as { files: { path: string }[] }).files.map((f) => f.path)).toEqual(['train.yaml']);

    const dir = tempDir('project-fifo');
    execFileSync('mkfifo', [join(dir, 'noiselint.project.yaml')]);
    writeFileSync(join(dir, 'train.yaml'), VALID);
    const r = runCli(['check', 'train.yaml'], { cwd: dir, heapMb: 96, killAfterMs: 20_000 });
    expect(describeCrash(r)).toBeNull();
  });

  it('limits in the project file are honoured (lowered maxFileBytes and maxListLength)', () => {
    const dir = tempDir('limits');
    mkdirSync(join(dir, 'configs'));
    writeFileSync(join(dir, 'noiselint.project.yaml'), 'limits:\n  maxFileBytes: 2000\n  maxListLength: 10\n');
    const big = join(dir, 'configs', 'big.yaml');
    writeFileSync(big, `${VALID}notes: "${'n'.repeat(4000)}"\n`);
    const list = join(dir, 'configs', 'list.yaml');
    writeFileSync(list, `${VALID}trained_betas: [${Array(20).fill('0.01').join(', ')}]\n`);
    const rBig = runCli(['check', 'configs/big.yaml', '--format', 'json'], { cwd: dir });
    expect(describeCrash(rBig)).toBeNull();
    expect(rBig.stdout + rBig.stderr).toMatch(/maxFileBytes/);
    const rList = runCli(['check', 'configs/list.yaml', '--format', 'json'], { cwd: dir });
    expect(describeCrash(rList)).toBeNull();
    expect(rList.stdout + rList.stderr).toMatch(/too-long|longer than 10/);
    // Without the project file the same list is fine (default maxListLength 200,000).
    const plain = tempDir('nolimits');
    writeFileSync(join(plain, 'list.yaml'), readFileSync(list));
    const rPlain = runCli(['check', 'list.yaml', '--format', 'json'], { cwd: plain });
    expect(rPlain.stdout + rPlain.stderr).not.toMatch(/too-long|longer than/);
  });

  it('the CLI refuses an oversized file before reading it (bounded heap)', () => {
    const dir = tempDir('oversize');
    const file = join(dir, 'huge.json');
    // 64 MB of one JSON string: far above the limit; a reader that loaded it first would need
    // more than the 64 MB heap it is given here once decoded to UTF-16.
    writeFileSync(file, Buffer.concat([Buffer.from('{"notes": "'), Buffer.alloc(64 * MB, 0x61), Buffer.from('"}')]));
    const r = runCli(['check', file], { heapMb: 64 });
    expect(describeCrash(r)).toBeNull();
    expect(r.stdout + r.stderr).toMatch(/maxFileBytes/);
    expect(existsSync(file)).toBe(true);
  });
});
