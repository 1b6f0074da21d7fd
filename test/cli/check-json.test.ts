import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { LineIndex } from '../../server/src/parse/lineIndex';
import { removeTree } from '../workspace/helpers';
import { VERSION } from '../../server/src/base/version';
import { CLEAN, LEAKY_V, ZERO_SNR_EPSILON, runCli, tempTree } from './check-helpers';
import { writeCorpus } from '../load/corpus';

const roots: string[] = [];
function tree(files: Record<string, string | Uint8Array>): string {
  const root = tempTree(files);
  roots.push(root);
  return root;
}
afterEach(() => {
  while (roots.length) removeTree(roots.pop()!);
});

interface Pos {
  line: number;
  character: number;
}
interface JsonRange {
  start: Pos;
  end: Pos;
}

/** The compact form of a range: [startLine, startCharacter, endLine, endCharacter]. */
type CompactRange = [number, number, number, number];

const rangeObject = (r: CompactRange): JsonRange => ({ start: { line: r[0], character: r[1] }, end: { line: r[2], character: r[3] } });

/** The text a 0-based JSON range (either form) covers. */
function textAt(text: string, range: JsonRange | CompactRange): string {
  const index = new LineIndex(text);
  const r = Array.isArray(range) ? rangeObject(range) : range;
  return text.slice(index.offsetAt(r.start), index.offsetAt(r.end));
}

interface CompactFinding {
  rule: string;
  severity: string;
  message: string;
  range: CompactRange;
  document?: number;
  fixes?: { title: string; effect?: string; touchesComment?: boolean; preferred?: boolean; edits?: unknown[] }[];
  related?: { path: string; range: CompactRange; message: string }[];
}

/** The compact form read back into the full one, by the defaults docs/project-file.md states. */
function expandCompact(f: CompactFinding): unknown {
  return {
    rule: f.rule,
    severity: f.severity,
    message: f.message,
    range: rangeObject(f.range),
    document: f.document ?? 0,
    fixes: (f.fixes ?? []).map((x) => ({
      title: x.title,
      effect: x.effect ?? 'sampling-only',
      touchesComment: x.touchesComment ?? false,
      preferred: x.preferred ?? true,
      ...(x.edits ? { edits: x.edits } : {}),
    })),
    related: (f.related ?? []).map((r) => ({ path: r.path, range: rangeObject(r.range), message: r.message })),
  };
}

/** Applies JSON edits (0-based ranges) back to front. */
function applyJsonEdits(text: string, edits: { range: JsonRange; newText: string }[]): string {
  const index = new LineIndex(text);
  const spans = edits
    .map((e) => ({ start: index.offsetAt(e.range.start), end: index.offsetAt(e.range.end), newText: e.newText }))
    .sort((a, b) => b.start - a.start);
  let out = text;
  for (const s of spans) out = out.slice(0, s.start) + s.newText + out.slice(s.end);
  return out;
}

const SEVERITIES = ['error', 'warning', 'info', 'hint'];

describe('check --format json', () => {
  it('follows the contract: files, findings with 0-based ranges and fixes, summary', async () => {
    const root = tree({ 'runs/eps.yaml': ZERO_SNR_EPSILON, 'runs/leaky.yaml': LEAKY_V, 'runs/clean.yaml': CLEAN });
    const r = await runCli(['check', '--format', 'json', 'runs'], root);
    expect(r.code).toBe(1);
    expect(r.stderr).toBe('');
    const out = JSON.parse(r.stdout);
    expect(Object.keys(out).sort()).toEqual(['files', 'formatVersion', 'skipped', 'summary', 'tool', 'unchecked']);
    expect(out.tool).toEqual({ name: 'noiselint', version: VERSION });
    expect(out.unchecked).toEqual([]);
    // Every checked file is listed, sorted, with paths relative to the current folder.
    expect(out.files.map((f: { path: string }) => f.path)).toEqual(['runs/clean.yaml', 'runs/eps.yaml', 'runs/leaky.yaml']);
    expect(out.files[0].findings).toEqual([]);

    let errors = 0;
    let warnings = 0;
    let infos = 0;
    for (const file of out.files) {
      const text = file.path.endsWith('eps.yaml') ? ZERO_SNR_EPSILON : file.path.endsWith('leaky.yaml') ? LEAKY_V : CLEAN;
      for (const f of file.findings) {
        expect(typeof f.rule).toBe('string');
        expect(SEVERITIES).toContain(f.severity);
        expect(typeof f.message).toBe('string');
        // Compact by default: [startLine, startCharacter, endLine, endCharacter].
        expect(f.range).toHaveLength(4);
        for (const n of f.range) expect(Number.isInteger(n) && n >= 0).toBe(true);
        // Fields at their default are left out: document 0, no fixes, no related locations.
        expect(f.document).toBeUndefined();
        expect(f.fixes === undefined || f.fixes.length > 0).toBe(true);
        expect(f.related === undefined || f.related.length > 0).toBe(true);
        for (const fix of f.fixes ?? []) {
          expect(typeof fix.title).toBe('string');
          // Written only when it is not the default: needs-retraining (effect), true (touchesComment), false (preferred).
          expect([undefined, 'needs-retraining']).toContain(fix.effect);
          expect(fix.touchesComment === undefined || fix.touchesComment === true).toBe(true);
          expect(fix.preferred === undefined || fix.preferred === false).toBe(true);
          expect(fix.edits.length).toBeGreaterThan(0);
          // Compact by default: [startLine, startCharacter, endLine, endCharacter, newText].
          for (const e of fix.edits) {
            expect(e).toHaveLength(5);
            expect(e.slice(0, 4).every((n: unknown) => Number.isInteger(n))).toBe(true);
            expect(typeof e[4]).toBe('string');
          }
        }
        if (f.severity === 'error') errors++;
        if (f.severity === 'warning') warnings++;
        if (f.severity === 'info') infos++;
        // The range lies inside the file and covers some of its text.
        expect(textAt(text, f.range).length).toBeGreaterThan(0);
      }
    }
    expect(out.summary).toMatchObject({ errors, warnings, infos, files: 3 });
    expect(out.formatVersion).toBe(4);
    expect(Object.keys(out)).toEqual(['formatVersion', 'tool', 'files', 'unchecked', 'skipped', 'summary']);
    expect(errors).toBeGreaterThan(0);
  });

  it('a range points at the field that causes the finding, and the fix edits apply to the file', async () => {
    const root = tree({ 'eps.yaml': ZERO_SNR_EPSILON });
    const out = JSON.parse((await runCli(['check', '--format=json', '--json-form', 'full', '--fix-edits', 'full'], root)).stdout);
    const finding = out.files[0].findings.find((f: { rule: string }) => f.rule === 'epsilon-at-zero-snr');
    expect(finding.severity).toBe('error');
    // The target field (line 6, 0-based) is what the finding marks.
    expect(finding.range.start.line).toBe(6);
    expect(textAt(ZERO_SNR_EPSILON, finding.range)).toContain('epsilon');
    const fix = finding.fixes[0];
    // Switching the target changes what the model learns: it needs retraining, and the title says so.
    expect(fix.effect).toBe('needs-retraining');
    expect(fix.touchesComment).toBe(false);
    expect(Object.keys(fix)).not.toContain('safety');
    expect(fix.title).toMatch(/fine-tun|retrain/i);
    const fixed = applyJsonEdits(ZERO_SNR_EPSILON, fix.edits);
    expect(fixed).toContain('prediction_type: v_prediction');
    expect(fixed).not.toContain('epsilon');
    expect(fixed.split('\n').length).toBe(ZERO_SNR_EPSILON.split('\n').length);
  });

  it('compact fix edits (the default) say the same as the full form; none leaves them out', async () => {
    const root = tree({ 'eps.yaml': ZERO_SNR_EPSILON, 'leaky.yaml': LEAKY_V });
    const full = JSON.parse((await runCli(['check', '--format', 'json', '--fix-edits', 'full'], root)).stdout);
    const compactText = (await runCli(['check', '--format', 'json'], root)).stdout;
    const compact = JSON.parse(compactText);
    const none = JSON.parse((await runCli(['check', '--format', 'json', '--fix-edits', 'none'], root)).stdout);
    // Compact separators: no indentation, one line.
    expect(compactText.trim().split('\n')).toHaveLength(1);
    let edits = 0;
    full.files.forEach((file: { findings: { fixes: { edits: { range: JsonRange; newText: string }[] }[] }[] }, i: number) => {
      file.findings.forEach((finding, j) => {
        finding.fixes.forEach((fix, k) => {
          const short = compact.files[i].findings[j].fixes[k].edits;
          expect(short).toEqual(
            fix.edits.map((e) => [e.range.start.line, e.range.start.character, e.range.end.line, e.range.end.character, e.newText]),
          );
          expect(none.files[i].findings[j].fixes[k]).not.toHaveProperty('edits');
          edits += short.length;
        });
      });
    });
    expect(edits).toBeGreaterThan(0);
    expect(compact.summary).toEqual(full.summary);
  });

  it('the compact form (the default) says what the full form says, in fewer bytes', async () => {
    // One folder of the bench corpus (paired training and sampling files: related locations,
    // findings with and without fixes) and a file of two documents.
    const sampling = `num_inference_steps: 4\ntimestep_spacing: leading\n---\nnum_inference_steps: 8\ntimestep_spacing: linspace\n`;
    const root = tree({ 'two-docs/sample.yaml': sampling, 'eps.yaml': ZERO_SNR_EPSILON });
    writeCorpus(join(root, 'corpus'), 20);
    const fullText = (await runCli(['check', '--format', 'json', '--json-form', 'full'], root)).stdout;
    const compactText = (await runCli(['check', '--format', 'json'], root)).stdout;
    const full = JSON.parse(fullText);
    const compact = JSON.parse(compactText);
    const findings = compact.files.flatMap((f: { findings: CompactFinding[] }) => f.findings) as CompactFinding[];
    // The tree exercises every field that can be left out or written.
    expect(findings.some((f) => f.related)).toBe(true);
    expect(findings.some((f) => (f.document ?? 0) > 0)).toBe(true);
    expect(findings.some((f) => !f.fixes)).toBe(true);
    expect(findings.some((f) => f.fixes?.some((x) => x.effect === undefined))).toBe(true);
    expect(findings.some((f) => f.fixes?.some((x) => x.effect === 'needs-retraining'))).toBe(true);
    expect(
      compact.files.map((f: { path: string; findings: CompactFinding[] }) => ({ path: f.path, findings: f.findings.map(expandCompact) })),
    ).toEqual(full.files);
    expect({ ...compact, files: [] }).toEqual({ ...full, files: [] });
    expect(compactText.length).toBeLessThan(fullText.length);
  });

  it('refuses an unknown --json-form', async () => {
    const r = await runCli(['check', '--format', 'json', '--json-form', 'tiny'], tree({ 'leaky.yaml': LEAKY_V }));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--json-form must be compact or full, not "tiny"/);
  });

  it('refuses an unknown --fix-edits form', async () => {
    const r = await runCli(['check', '--format', 'json', '--fix-edits', 'tiny'], tree({ 'leaky.yaml': LEAKY_V }));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--fix-edits must be compact, full or none, not "tiny"/);
  });

  it('characters count UTF-16 code units, after a BOM and non-ASCII text', async () => {
    const text = `\uFEFF# Lanternfish: 夜景 🌙 storyboard\n${LEAKY_V.replace('noise_scheduler:', 'noise_scheduler: # 🌙')}`;
    const root = tree({ 'moon.yaml': text });
    const out = JSON.parse((await runCli(['check', '--format', 'json'], root)).stdout);
    const finding = out.files[0].findings[0];
    expect(finding.rule).toBe('terminal-snr-leak');
    // Decoding the range against the text (BOM kept) lands on real schedule text, not off by the BOM.
    expect(textAt(text, finding.range)).toMatch(/^[a-z_]/);
  });

  it('--show error leaves warnings out of the list, but the summary still counts them (and agrees with the exit code)', async () => {
    const root = tree({ 'leaky.yaml': LEAKY_V });
    const r = await runCli(['check', '--format', 'json', '--show', 'error', '--budget', 'warning=0'], root);
    const out = JSON.parse(r.stdout);
    expect(out.files[0].findings).toEqual([]);
    expect(r.code).toBe(1);
    expect(out.summary).toEqual({
      errors: 0,
      warnings: 1,
      infos: 0,
      hints: 0,
      files: 1,
      passedOver: 0,
      hidden: 1,
      budgets: [
        { severity: 'error', allowed: 0, found: 0, exceeded: false },
        { severity: 'warning', allowed: 0, found: 1, exceeded: true },
      ],
    });
  });

  it('paths stay relative when checking from a sub-folder with ..', async () => {
    const root = tree({ 'a/leaky.yaml': LEAKY_V, 'b/.keep': '' });
    const out = JSON.parse((await runCli(['check', '--format', 'json', '../a'], `${root}/b`)).stdout);
    expect(out.files.map((f: { path: string }) => f.path)).toEqual(['../a/leaky.yaml']);
  });
});
