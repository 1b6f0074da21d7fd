/**
 * Property: `selectFixes` (sorted taken edits, binary search) chooses exactly what its policy says,
 * stated here the slow way: findings in position order, each taking its first allowed fix whose
 * edits are well formed and collide with no edit taken before (every pair compared).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Finding, FixProposal, TextEdit } from '../../server/src/base/findings';
import { anyConflict, sortEdits } from '../../server/src/fix/apply';
import { allowedFix, FULL_CONSENT, fixCandidates, selectFixes } from '../../server/src/fix/select';

const LENGTH = 40;

function reference(findings: readonly Finding[]): { edits: TextEdit[]; picked: FixProposal[] } {
  const allow = allowedFix(FULL_CONSENT);
  const taken: TextEdit[] = [];
  const picked: FixProposal[] = [];
  for (const finding of [...findings].sort((a, b) => a.span.start - b.span.start)) {
    for (const fix of fixCandidates(finding.fixes, allow)) {
      const own = sortEdits(fix.edits);
      const inRange = fix.edits.every((e) => e.span.start >= 0 && e.span.end <= LENGTH && e.span.start <= e.span.end);
      const selfConsistent = own.every((e, i) => !anyConflict([e], own.slice(0, i)));
      if (!inRange || !selfConsistent || anyConflict(fix.edits, taken)) continue;
      taken.push(...fix.edits);
      picked.push(fix);
      break;
    }
  }
  return { edits: sortEdits(taken), picked };
}

const edit = fc
  .tuple(fc.integer({ min: 0, max: LENGTH + 2 }), fc.integer({ min: 0, max: 4 }), fc.constantFrom('', 'x', 'yz'))
  .map(([start, width, newText]): TextEdit => ({ span: { start, end: start + width }, newText }));
const fix = fc
  .tuple(fc.array(edit, { minLength: 1, maxLength: 3 }), fc.boolean())
  .map(([edits, preferred]): FixProposal => ({ title: 'fix', edits, preferred, effect: 'sampling-only', touchesComment: false }));
const finding = fc.tuple(fc.integer({ min: 0, max: LENGTH }), fc.array(fix, { minLength: 1, maxLength: 2 })).map(([start, fixes]): Finding => ({
  rule: 'r',
  severity: 'warning',
  message: 'm',
  span: { start, end: start },
  documentIndex: 0,
  related: [],
  fixes,
}));

describe('selectFixes', () => {
  it('takes the same fixes and edits as the pairwise statement of its policy', () => {
    fc.assert(
      fc.property(fc.array(finding, { maxLength: 25 }), (findings) => {
        const got = selectFixes(findings, LENGTH, allowedFix(FULL_CONSENT));
        const want = reference(findings);
        expect(got.selected.map((s) => s.fix)).toEqual(want.picked);
        expect(got.edits).toEqual(want.edits);
      }),
      { numRuns: 1000 },
    );
  });
});
