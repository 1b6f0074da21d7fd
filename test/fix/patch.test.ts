/**
 * The `fix --dry-run` diff built from where fixes changed a text (`composeChanges` + `unifiedPatch`).
 * References: jsdiff's own `applyPatch` (a general-purpose diff library) must turn the old text
 * into the new one with our patch, and on real fixes our patch is the very text jsdiff's
 * whole-text `createTwoFilesPatch` prints.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { applyPatch, createTwoFilesPatch, parsePatch } from 'diff';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { TextEdit } from '../../server/src/base/findings';
import { unifiedPatch } from '../../server/src/cli/output/patch';
import { analyzeText } from '../../server/src/engine/api';
import { applyEdits } from '../../server/src/fix/apply';
import { composeChanges, type TextChange } from '../../server/src/fix/changes';
import { fixText } from '../../server/src/fix/loop';
import { FULL_CONSENT } from '../../server/src/fix/select';
import { corpusFiles } from '../consumers/corpus';

/** The new text rebuilt from the old one and the changes alone (gaps taken from the old text). */
function rebuild(before: string, after: string, changes: readonly TextChange[]): string {
  let out = '';
  let at = 0;
  for (const c of changes) {
    out += before.slice(at, c.oldStart) + after.slice(c.newStart, c.newEnd);
    at = c.oldEnd;
  }
  return out + before.slice(at);
}

/** Every hunk's old and new sides are the lines of the two texts at the line numbers it names. */
function hunksInPlace(patch: string, before: string, after: string): void {
  const oldLines = before.split('\n');
  const newLines = after.split('\n');
  for (const h of parsePatch(patch)[0]!.hunks) {
    const body = h.lines.filter((l) => !l.startsWith('\\'));
    const oldSide = body.filter((l) => !l.startsWith('+')).map((l) => l.slice(1));
    const newSide = body.filter((l) => !l.startsWith('-')).map((l) => l.slice(1));
    expect(oldSide).toEqual(oldLines.slice(h.oldStart - 1, h.oldStart - 1 + h.oldLines));
    expect(newSide).toEqual(newLines.slice(h.newStart - 1, h.newStart - 1 + h.newLines));
  }
}

const line = fc.constantFrom('a', 'b', 'key: 1', '  nested: x', '', '# note');
const ending = fc.constantFrom('\n', '\r\n', '\r');
const text = fc
  .tuple(fc.array(line, { maxLength: 40 }), ending, fc.boolean())
  .map(([lines, eol, final]) => lines.join(eol) + (final && lines.length > 0 ? eol : ''));
const insert = fc.constantFrom('', 'x', '\n', 'new: 2\n', '\r\n', 'a\nb');

/** Non-overlapping edits of a text of length `n`, from sorted cut points. */
function editsOf(n: number, cuts: number[], texts: string[]): TextEdit[] {
  const points = cuts.map((c) => c % (n + 1)).sort((a, b) => a - b);
  const edits: TextEdit[] = [];
  for (let k = 0; k + 1 < points.length; k += 2) {
    edits.push({ span: { start: points[k]!, end: points[k + 1]! }, newText: texts[k % texts.length] ?? '' });
  }
  return edits;
}

type Round = [number[], string[]];

/** The text after every round of edits, and the changes composed round by round. */
function applyRounds(start: string, rs: readonly Round[]): { current: string; changes: TextChange[] } {
  let current = start;
  let changes: TextChange[] = [];
  for (const [cuts, texts] of rs) {
    const edits = editsOf(current.length, cuts, texts);
    current = applyEdits(current, edits);
    changes = composeChanges(changes, edits);
  }
  return { current, changes };
}

const rounds = fc.array(fc.tuple(fc.array(fc.nat(), { maxLength: 8 }), fc.array(insert, { minLength: 1, maxLength: 4 })), {
  minLength: 1,
  maxLength: 4,
});

describe('composeChanges', () => {
  it('tracks a replacement, then an insertion before it and an edit that overlaps it', () => {
    // Round 1: "leading" -> "trailing" in "spacing: leading\nsteps: 30\n".
    const original = 'spacing: leading\nsteps: 30\n';
    const r1: TextEdit[] = [{ span: { start: 9, end: 16 }, newText: 'trailing' }];
    const t1 = applyEdits(original, r1);
    let changes = composeChanges([], r1);
    expect(changes).toEqual([{ oldStart: 9, oldEnd: 16, newStart: 9, newEnd: 17 }]);
    // Round 2: insert a line at the top and replace "ing\nsteps" (overlapping the first change).
    const r2: TextEdit[] = [
      { span: { start: 0, end: 0 }, newText: 'eta: 0\n' },
      { span: { start: 14, end: 23 }, newText: 'ed\nstep_count' },
    ];
    const t2 = applyEdits(t1, r2);
    changes = composeChanges(changes, r2);
    expect(t2).toBe('eta: 0\nspacing: trailed\nstep_count: 30\n');
    expect(changes).toEqual([
      { oldStart: 0, oldEnd: 0, newStart: 0, newEnd: 7 },
      { oldStart: 9, oldEnd: 22, newStart: 16, newEnd: 34 },
    ]);
    expect(rebuild(original, t2, changes)).toBe(t2);
  });

  it('over any rounds of edits, the changes are sorted, apart, and rebuild the new text', () => {
    fc.assert(
      fc.property(text, rounds, (start, rs) => {
        const { current, changes } = applyRounds(start, rs);
        for (let k = 1; k < changes.length; k++) {
          // Changes that touch are merged: an unchanged gap of at least one character separates them.
          expect(changes[k]!.oldStart).toBeGreaterThan(changes[k - 1]!.oldEnd);
          expect(changes[k]!.newStart - changes[k - 1]!.newEnd).toBe(changes[k]!.oldStart - changes[k - 1]!.oldEnd);
        }
        expect(rebuild(start, current, changes)).toBe(current);
      }),
      { numRuns: 500 },
    );
  });
});

describe('unifiedPatch', () => {
  it('jsdiff applies it (the old text becomes the new one) and every hunk sits at its line numbers, over any rounds of edits', () => {
    fc.assert(
      fc.property(text, rounds, (start, rs) => {
        const { current, changes } = applyRounds(start, rs);
        if (current === start) return;
        // Also with an edit-length bound of 1, where every stretch is shown removed and added whole.
        for (const bound of [undefined, 1]) {
          const patch = unifiedPatch('a/f.yaml', 'b/f.yaml', start, current, changes, bound);
          expect(applyPatch(start, patch)).toBe(current);
          hunksInPlace(patch, start, current);
        }
      }),
      { numRuns: 500 },
    );
  });

  it('is the same text as a whole-text jsdiff patch for changes far apart and close together', () => {
    const lines = Array.from({ length: 60 }, (_, i) => `key_${i}: ${i}`);
    const before = `${lines.join('\n')}\n`;
    // Edits on lines 3, 10 (6 lines apart: one hunk), 40 (far: its own hunk) and an append at the end.
    const at = (n: number): number => before.indexOf(`key_${n}:`);
    const edits: TextEdit[] = [
      { span: { start: at(3), end: at(3) + 5 }, newText: 'step_3' },
      { span: { start: at(10), end: at(11) }, newText: '' },
      { span: { start: at(40), end: at(40) }, newText: 'extra: 1\n' },
      { span: { start: before.length, end: before.length }, newText: 'tail: 2' },
    ];
    const after = applyEdits(before, edits);
    const ours = unifiedPatch('a/f.yaml', 'b/f.yaml', before, after, composeChanges([], edits));
    expect(ours).toBe(createTwoFilesPatch('a/f.yaml', 'b/f.yaml', before, after));
    expect(ours.match(/^@@ /gm)).toHaveLength(3);
    expect(ours).toContain('\\ No newline at end of file');
  });

  it('shows a stretch past the edit-length bound removed and added whole, and it still applies', () => {
    const before = `head: 0\n${Array.from({ length: 2500 }, (_, i) => `old_${i}: ${i}`).join('\n')}\ntail: 1\n`;
    const from = before.indexOf('old_0');
    const to = before.indexOf('tail');
    const edits: TextEdit[] = [{ span: { start: from, end: to }, newText: Array.from({ length: 2500 }, (_, i) => `new_${i}: ${i}\n`).join('') }];
    const after = applyEdits(before, edits);
    const patch = unifiedPatch('a/f.yaml', 'b/f.yaml', before, after, composeChanges([], edits));
    expect(patch.match(/^@@ -1,2502 \+1,2502 @@$/gm)).toHaveLength(1);
    expect(patch.match(/^-old_/gm)).toHaveLength(2500);
    expect(patch.match(/^\+new_/gm)).toHaveLength(2500);
    expect(applyPatch(before, patch)).toBe(after);
    hunksInPlace(patch, before, after);
  });

  it('is the same text as a whole-text jsdiff patch for every fix of the corpus and the examples', () => {
    const files: { path: string; text: string }[] = corpusFiles().map((f) => ({ path: f.path, text: f.text }));
    const examples = join(__dirname, '../../examples');
    const walk = (dir: string): void => {
      for (const name of readdirSync(dir).sort()) {
        const p = join(dir, name);
        if (statSync(p).isDirectory()) walk(p);
        else if (/\.(ya?ml|json|toml)$/.test(name)) files.push({ path: p, text: readFileSync(p, 'utf8') });
      }
    };
    walk(examples);
    let compared = 0;
    for (const f of files) {
      const result = fixText(f.text, (t) => analyzeText(t, { path: f.path }), FULL_CONSENT);
      if (result.text === f.text) continue;
      compared++;
      const ours = unifiedPatch(`a/${f.path}`, `b/${f.path}`, f.text, result.text, result.changes);
      expect(ours, f.path).toBe(createTwoFilesPatch(`a/${f.path}`, `b/${f.path}`, f.text, result.text));
    }
    // The flawed corpus files and the examples: 20 of them have fixes today.
    expect(compared).toBeGreaterThanOrEqual(20);
  });
});
