/**
 * The fix-all loop over a stand-in analysis: a toy "rule" that wants every `leading` to become
 * `trailing` one word at a time, plus fixes that need retraining or touch a comment, and conflicting ones.
 */
import { describe, expect, it } from 'vitest';
import type { Finding, FixEffect, FixProposal } from '../../server/src/base/findings';
import type { ParsedFile } from '../../server/src/parse/types';
import { fixText } from '../../server/src/fix/loop';

function parsedStub(text: string, broken = false): ParsedFile {
  return {
    format: 'yaml',
    text,
    documents: [],
    problems: broken ? [{ message: 'broken', span: { start: 0, end: 1 }, severity: 'error', code: 'yaml-syntax' }] : [],
    lineEnding: '\n',
    bom: false,
    suppressions: [],
  };
}

function finding(rule: string, fixes: FixProposal[]): Finding {
  return { rule, severity: 'warning', message: rule, span: { start: 0, end: 0 }, documentIndex: 0, related: [], fixes };
}

/** One finding per `leading` word; its fix replaces that word. */
function spacingAnalyze(effect: FixEffect = 'sampling-only', touchesComment = false) {
  return (text: string) => {
    const findings: Finding[] = [];
    for (const m of text.matchAll(/leading/g)) {
      findings.push(
        finding('toy-spacing', [
          {
            title: 'use trailing',
            effect,
            touchesComment,
            preferred: true,
            edits: [{ span: { start: m.index, end: m.index + 7 }, newText: 'trailing' }],
          },
        ]),
      );
    }
    return { parsed: parsedStub(text, text.includes('BROKEN')), findings };
  };
}

const NONE = { acceptRetraining: false, acceptCommentEdits: false };
const ALL = { acceptRetraining: true, acceptCommentEdits: true };

describe('fixText', () => {
  it('applies every non-conflicting sampling-only fix and stops when nothing changes', () => {
    const r = fixText('a: leading\nb: leading\n', spacingAnalyze(), NONE);
    expect(r.text).toBe('a: trailing\nb: trailing\n');
    expect(r.applied.map((a) => a.rule)).toEqual(['toy-spacing', 'toy-spacing']);
    expect(r.remaining).toBe(0);
    // Idempotent: fixing the fixed text changes nothing.
    const again = fixText(r.text, spacingAnalyze(), NONE);
    expect(again.text).toBe(r.text);
    expect(again.applied).toEqual([]);
  });

  it('fixes that need retraining only when retraining is accepted; they are counted otherwise', () => {
    const held = fixText('a: leading\n', spacingAnalyze('needs-retraining'), NONE);
    expect(held.text).toBe('a: leading\n');
    expect([held.heldForRetraining, held.heldForComments]).toEqual([1, 0]);
    // Accepting comment edits is not accepting retraining.
    expect(fixText('a: leading\n', spacingAnalyze('needs-retraining'), { ...NONE, acceptCommentEdits: true }).text).toBe('a: leading\n');
    const accepted = fixText('a: leading\n', spacingAnalyze('needs-retraining'), { ...NONE, acceptRetraining: true });
    expect(accepted.text).toBe('a: trailing\n');
    expect(accepted.applied[0]!.effect).toBe('needs-retraining');
  });

  it('fixes that touch a comment only when comment edits are accepted, whatever their effect', () => {
    const held = fixText('a: leading\n', spacingAnalyze('sampling-only', true), NONE);
    expect(held.text).toBe('a: leading\n');
    expect([held.heldForRetraining, held.heldForComments]).toEqual([0, 1]);
    expect(fixText('a: leading\n', spacingAnalyze('sampling-only', true), { ...NONE, acceptCommentEdits: true }).text).toBe('a: trailing\n');
    // A retraining fix that also touches a comment needs both.
    const both = spacingAnalyze('needs-retraining', true);
    expect(fixText('a: leading\n', both, { ...NONE, acceptRetraining: true }).text).toBe('a: leading\n');
    expect(fixText('a: leading\n', both, { ...NONE, acceptCommentEdits: true }).text).toBe('a: leading\n');
    expect(fixText('a: leading\n', both, ALL).text).toBe('a: trailing\n');
    // The count names the consent still missing.
    const afterRetraining = fixText('a: leading\n', both, { ...NONE, acceptRetraining: true });
    expect([afterRetraining.heldForRetraining, afterRetraining.heldForComments]).toEqual([0, 1]);
    const neither = fixText('a: leading\n', both, NONE);
    expect([neither.heldForRetraining, neither.heldForComments]).toEqual([1, 0]);
  });

  it('a fix overlapping one already chosen waits for the next round', () => {
    let rounds = 0;
    const analyze = (text: string) => {
      rounds++;
      const findings: Finding[] = [];
      // Two findings whose fixes edit the same word: only one can go per round.
      if (text.includes('x: 1')) {
        const at = text.indexOf('x: 1');
        findings.push(
          finding('first', [
            {
              title: 'x=2',
              effect: 'sampling-only',
              touchesComment: false,
              preferred: true,
              edits: [{ span: { start: at, end: at + 4 }, newText: 'x: 2' }],
            },
          ]),
        );
        findings.push(
          finding('second', [
            {
              title: 'x=3',
              effect: 'sampling-only',
              touchesComment: false,
              preferred: true,
              edits: [{ span: { start: at + 3, end: at + 4 }, newText: '3' }],
            },
          ]),
        );
      }
      return { parsed: parsedStub(text), findings };
    };
    const r = fixText('x: 1\n', analyze, NONE);
    expect(r.text).toBe('x: 2\n');
    expect(r.applied.map((a) => a.rule)).toEqual(['first']);
    expect(rounds).toBe(2);
  });

  it('prefers the preferred fix, else the first allowed one', () => {
    const analyze = (text: string) => ({
      parsed: parsedStub(text),
      findings: text.startsWith('v: 0')
        ? [
            finding('pick', [
              {
                title: 'retraining best',
                effect: 'needs-retraining',
                touchesComment: false,
                preferred: true,
                edits: [{ span: { start: 3, end: 4 }, newText: '9' }],
              },
              {
                title: 'sampling other',
                effect: 'sampling-only',
                touchesComment: false,
                preferred: false,
                edits: [{ span: { start: 3, end: 4 }, newText: '1' }],
              },
            ]),
          ]
        : [],
    });
    expect(fixText('v: 0', analyze, NONE).text).toBe('v: 1');
    expect(fixText('v: 0', analyze, ALL).text).toBe('v: 9');
  });

  it('a file that does not parse is returned untouched with the error', () => {
    const r = fixText('BROKEN leading', spacingAnalyze(), ALL);
    expect(r.text).toBe('BROKEN leading');
    expect(r.parseError?.message).toBe('broken');
    expect(r.applied).toEqual([]);
  });

  it('edits that would break the file are dropped', () => {
    const analyze = (text: string) => ({
      parsed: parsedStub(text, text.includes('BROKEN')),
      findings: text.includes('ok')
        ? [
            finding('breaker', [
              {
                title: 'break',
                effect: 'sampling-only',
                touchesComment: false,
                preferred: true,
                edits: [{ span: { start: 0, end: 2 }, newText: 'BROKEN' }],
              },
            ]),
          ]
        : [],
    });
    const r = fixText('ok\n', analyze, NONE);
    expect(r.text).toBe('ok\n');
    expect(r.brokeText).toBe(true);
  });

  it('fixes that undo each other stop instead of cycling', () => {
    const analyze = (text: string) => ({
      parsed: parsedStub(text),
      findings: [
        finding('flip', [
          {
            title: 'flip',
            effect: 'sampling-only',
            touchesComment: false,
            preferred: true,
            edits: [{ span: { start: 0, end: 1 }, newText: text[0] === 'a' ? 'b' : 'a' }],
          },
        ]),
      ],
    });
    const r = fixText('a', analyze, { ...NONE, maxPasses: 5 });
    expect(r.text).toBe('b');
    expect(r.applied).toHaveLength(1);
  });
});
