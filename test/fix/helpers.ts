/** Helpers for fix tests: render concept edits on a text, apply them, read the result back. */
import { expect } from 'vitest';
import { parseText } from '../../server/src/parse';
import type { SourceFormat } from '../../server/src/parse/types';
import { buildSetup } from '../../server/src/setup';
import type { Setup } from '../../server/src/setup/types';
import type { ConceptEdit } from '../../server/src/rules/types';
import type { TextEdit } from '../../server/src/base/findings';
import { applyEdits, editsTouchComment, renderConceptEdits } from '../../server/src/fix';

export function setupOf(text: string, format: SourceFormat = 'yaml', documentIndex = 0): { parsed: ReturnType<typeof parseText>; setup: Setup } {
  const parsed = parseText(text, format);
  const doc = parsed.documents.find((d) => d.index === documentIndex);
  if (!doc) throw new Error(`no document ${documentIndex}`);
  return { parsed, setup: buildSetup(doc, {}) };
}

export function render(text: string, edits: ConceptEdit[], format: SourceFormat = 'yaml', documentIndex = 0): TextEdit[] | null {
  const { parsed, setup } = setupOf(text, format, documentIndex);
  return renderConceptEdits(parsed, setup, edits);
}

export interface FixCase {
  name: string;
  format?: SourceFormat;
  documentIndex?: number;
  before: string;
  edits: ConceptEdit[];
  /** Expected text, or null when the renderer must give up. */
  after: string | null;
  /** Expected editsTouchComment() (default false). */
  touchesComment?: boolean;
}

/**
 * Renders, applies and compares; then re-reads the result: no parse errors, every `set` reads back
 * as the value asked for, every `remove` is gone.
 */
export function checkFix(c: FixCase): void {
  const format = c.format ?? 'yaml';
  const documentIndex = c.documentIndex ?? 0;
  const { parsed, setup } = setupOf(c.before, format, documentIndex);
  const edits = renderConceptEdits(parsed, setup, c.edits);
  if (c.after === null) {
    expect(edits, 'the renderer should give up').toBeNull();
    return;
  }
  expect(edits, 'the renderer gave up').not.toBeNull();
  const out = applyEdits(c.before, edits!);
  expect(out).toBe(c.after);
  expect(editsTouchComment(parsed, edits!)).toBe(c.touchesComment ?? false);
  const again = setupOf(out, format, documentIndex);
  expect(again.parsed.problems.filter((p) => p.severity === 'error')).toEqual([]);
  for (const edit of c.edits) {
    const field = again.setup.fields[edit.concept];
    if (edit.kind === 'set') {
      expect(field?.value, `${edit.concept} reads back`).toEqual(edit.value);
      expect(field?.source, `${edit.concept} is written in the file`).toBeTruthy();
    } else {
      expect(field?.source ?? null, `${edit.concept} is gone`).toBeNull();
    }
  }
}

export const lines = (...ls: string[]) => ls.join('\n');
