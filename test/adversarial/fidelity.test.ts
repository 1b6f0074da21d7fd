/**
 * Inputs that are valid or merely unusual and used to be misread: lone-CR line endings, the core
 * schema's own tags, a nesting limit the parser could not honour, file names with control and
 * bidirectional characters, and many documents in one file (work per fix must not scan the
 * whole text).
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type * as jsdiff from 'diff';
import { applyPatch } from 'diff';
import { afterAll, afterEach, describe, expect, it, vi } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { fixText } from '../../server/src/fix/loop';
import { parseText } from '../../server/src/parse';
import type { LocatedMap } from '../../server/src/parse/types';
import { ProjectFileError, resolveProjectData } from '../../server/src/workspace/projectFile';
import { runCli } from '../cli/check-helpers';
import { removeTempDirs, tempDir } from './helpers';

afterAll(removeTempDirs);

/** The longest text handed to the diff library (jsdiff) in one call, watched through a pass-through mock. */
const diffWork = vi.hoisted(() => ({ longest: 0, calls: 0 }));
vi.mock('diff', async (importOriginal) => {
  const real = await importOriginal<typeof jsdiff>();
  const watched =
    <A extends unknown[], R>(f: (...args: A) => R) =>
    (...args: A): R => {
      diffWork.calls++;
      for (const a of args) if (typeof a === 'string') diffWork.longest = Math.max(diffWork.longest, a.length);
      return f(...args);
    };
  return {
    ...real,
    structuredPatch: watched(real.structuredPatch),
    createTwoFilesPatch: watched(real.createTwoFilesPatch),
    createPatch: watched(real.createPatch),
    diffLines: watched(real.diffLines),
  };
});

/** A leading-spacing sampler on a scaled-linear schedule (invented Lanternfish Pictures data). */
const LINES = [
  '# Lanternfish Pictures: night storyboard sampler (invented demo data)',
  'noise_scheduler:',
  '  num_train_timesteps: 1000',
  '  beta_schedule: scaled_linear',
  '  beta_start: 0.00085',
  '  beta_end: 0.012',
  '  prediction_type: v_prediction',
  '  rescale_betas_zero_snr: true',
  '  timestep_spacing: leading',
  'num_inference_steps: 30',
  '',
];

function valueOf(text: string, key: string): unknown {
  const root = parseText(text, 'yaml').documents[0]!.root as LocatedMap;
  return root.entries.find((e) => e.key === key)?.value;
}

describe('lone CR line endings (YAML 1.2 section 5.4: a lone CR is a line break)', () => {
  const cr = LINES.join('\r');
  const lf = LINES.join('\n');

  it('read as line breaks: no parse problem, the same findings as with LF', () => {
    const a = analyzeText(cr, { path: 'night.yaml' });
    const b = analyzeText(lf, { path: 'night.yaml' });
    expect(a.parsed.problems).toEqual([]);
    expect(a.findings.map((f) => [f.rule, f.span])).toEqual(b.findings.map((f) => [f.rule, f.span]));
    expect(a.findings.map((f) => f.rule)).toContain('sampler-skips-last-step');
    expect(a.parsed.lineEnding).toBe('\r');
  });

  it('fixed with CR endings kept (no LF written), as the LF file is fixed', () => {
    const analyze = (t: string) => analyzeText(t, { path: 'night.yaml' });
    const fixedCr = fixText(cr, analyze, { acceptRetraining: true, acceptCommentEdits: true });
    const fixedLf = fixText(lf, analyze, { acceptRetraining: true, acceptCommentEdits: true });
    expect(fixedCr.applied.length).toBeGreaterThan(0);
    expect(fixedCr.text).not.toContain('\n');
    expect(fixedCr.text.split('\r')).toEqual(fixedLf.text.split('\n'));
    expect(fixedCr.text).toContain('\r  timestep_spacing: trailing\r');
  });
});

describe('core-schema tags (YAML 1.2 section 10.3) are applied, not reported as custom tags', () => {
  it.each([
    ['!!float 1', 1],
    ['!!float "0.5"', 0.5],
    ['!!float 1e-4', 1e-4],
    ['!<tag:yaml.org,2002:float> 2', 2],
    ['!!int "1000"', 1000],
    ['!!int 0x10', 16],
    ['!!bool true', true],
    ['!!bool "false"', false],
    ['!!null ~', null],
    ['!!str 1000', '1000'],
  ])('a: %s -> %j', (written, expected) => {
    const text = `a: ${written}\n`;
    const parsed = parseText(text, 'yaml');
    expect(parsed.problems).toEqual([]);
    expect((valueOf(text, 'a') as { value: unknown }).value).toEqual(expected);
  });

  it('!!float on a beta is read as the number (no warning, schedule found)', () => {
    const text = 'num_train_timesteps: !!int 1000\nbeta_schedule: !!str linear\nbeta_start: !!float 1\nbeta_end: !!float 0.02\n';
    const result = analyzeText(text, { path: 'train.yaml' });
    expect(result.parsed.problems.map((p) => p.code)).not.toContain('custom-tag');
    expect((valueOf(text, 'beta_start') as { value: unknown }).value).toBe(1);
  });

  it('a text that does not fit its core tag is a tag-mismatch warning, not a custom tag', () => {
    const parsed = parseText('a: !!int 1.5\n', 'yaml');
    expect(parsed.problems.map((p) => [p.code, p.severity])).toEqual([['tag-mismatch', 'warning']]);
    expect(parsed.problems[0]!.message).toMatch(/not a valid !!int value/);
  });
});

describe('maxNesting: the accepted range is the enforced one', () => {
  const errorOf = (limits: Record<string, number>): string | null => {
    try {
      resolveProjectData({ limits }, '/p/noiselint.project.yaml', null);
      return null;
    } catch (err) {
      if (err instanceof ProjectFileError) return err.message;
      throw err;
    }
  };

  it('500 (what the parser enforces) is accepted; 501 and 10,000 are refused in one line', () => {
    expect(errorOf({ maxNesting: 500 })).toBeNull();
    expect(errorOf({ maxNesting: 501 })).toContain('limits.maxNesting: must be an integer in [1, 500]');
    expect(errorOf({ maxNesting: 10_000 })).toContain('limits.maxNesting: must be an integer in [1, 500]');
  });

  it('an accepted value is honoured exactly: 500 levels read, the 501st cut', () => {
    const deep = (n: number) => `${'['.repeat(n)}1${']'.repeat(n)}\n`;
    expect(parseText(`a: ${deep(499)}`, 'yaml', { maxNesting: 500 }).problems).toEqual([]);
    expect(parseText(`a: ${deep(500)}`, 'yaml', { maxNesting: 500 }).problems.map((p) => p.code)).toContain('too-deep');
  });
});

describe('file names with control and bidirectional characters are printed escaped', () => {
  // U+202E (right-to-left override) makes "\u202Elmay.txt" display as "txt.yaml"; ESC drives the terminal.
  const names = ['night\u202Elmay.yaml', 'still\u001b[31m.yaml', 'frame\u2066x\u2069.yaml'];

  it.each(['check', 'fix --dry-run', 'explain'])('%s: no raw control or bidi character in stdout or stderr', async (command) => {
    const dir = tempDir('bidi');
    for (const n of names) writeFileSync(join(dir, n), LINES.join('\n'));
    writeFileSync(join(dir, 'broken\u202E.yaml'), 'num_train_timesteps: [\n');
    const args = command === 'explain' ? ['explain', ...names, 'missing\u202E.yaml'] : [...command.split(' '), '.'];
    const r = await runCli(args, dir);
    const all = r.stdout + r.stderr;
    expect(all.replace(/\n/g, '')).not.toMatch(/[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/);
    expect(all).toContain('night\\u202Elmay.yaml');
    if (command !== 'explain') expect(all).toContain('still\\u001B[31m.yaml');
    else expect(all).toContain('missing\\u202E.yaml');
  });
});

describe('many documents in one file: no whole-text scan per fix', () => {
  afterEach(() => vi.restoreAllMocks());

  /**
   * Counts regular-expression runs over the whole text while the file is analysed and its fixes
   * rendered. V8 routes test/replace/match/split through `exec` once it is replaced, so one spy
   * sees them all. Work per fix may look at its own lines, never at the whole text.
   */
  function wholeTextScans(documents: number): number {
    const doc = LINES.slice(1, 10).join('\n');
    const text = Array.from({ length: documents }, () => doc).join('\n---\n') + '\n';
    // eslint-disable-next-line @typescript-eslint/unbound-method -- kept to be called with its own `this` below
    const exec = RegExp.prototype.exec;
    let scans = 0;
    vi.spyOn(RegExp.prototype, 'exec').mockImplementation(function (this: RegExp, s: string) {
      if (s === text) scans++;
      return exec.call(this, s);
    });
    const result = analyzeText(text, { path: 'many.yaml' });
    vi.restoreAllMocks();
    expect(result.findings.filter((f) => f.fixes.length > 0).length).toBeGreaterThanOrEqual(documents);
    return scans;
  }

  it('the count does not grow with the number of documents (and fixes)', () => {
    const few = wholeTextScans(50);
    const many = wholeTextScans(200);
    expect(many).toBe(few);
    expect(many).toBeLessThan(20);
  });

  it('the dry-run diff compares only the lines around each fix, never the whole texts', async () => {
    const doc = LINES.slice(1, 10).join('\n');
    const documents = 400;
    const text = Array.from({ length: documents }, () => doc).join('\n---\n') + '\n';
    const dir = tempDir('many-docs');
    writeFileSync(join(dir, 'many.yaml'), text);
    diffWork.longest = 0;
    diffWork.calls = 0;
    const r = await runCli(['fix', '--dry-run', 'many.yaml'], dir);
    expect(r.code).toBe(1);
    expect(r.stderr).toContain(`would apply ${documents} fixes`);
    // One leading -> trailing per document, and the patch turns the text into the fixed one.
    const patch = r.stdout;
    expect(patch.match(/^\+ {2}timestep_spacing: trailing$/gm)).toHaveLength(documents);
    expect(applyPatch(text, patch)).toBe(text.replaceAll('timestep_spacing: leading', 'timestep_spacing: trailing'));
    // Each call sees one change with its context (about a dozen lines), not the 94 KB text.
    expect(text.length).toBeGreaterThan(90_000);
    expect(diffWork.calls).toBeGreaterThanOrEqual(documents);
    expect(diffWork.longest).toBeLessThan(1_000);
  });
});
