/**
 * The fix-all loop over a stand-in analysis: a toy "rule" that wants every `leading` to become
 * `trailing` one word at a time, plus unsafe and conflicting fixes.
 */
import { describe, expect, it } from 'vitest';
import type { Finding, FixProposal } from '../../server/src/base/findings';
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
function spacingAnalyze(safety: 'safe' | 'unsafe' = 'safe') {
  return (text: string) => {
    const findings: Finding[] = [];
    for (const m of text.matchAll(/leading/g)) {
      findings.push(finding('toy-spacing', [{ title: 'use trailing', safety, preferred: true, edits: [{ span: { start: m.index!, end: m.index! + 7 }, newText: 'trailing' }] }]));
    }
    return { parsed: parsedStub(text, text.includes('BROKEN')), findings };
  };
}

describe('fixText', () => {
  it('applies every non-conflicting safe fix and stops when nothing changes', () => {
    const r = fixText('a: leading\nb: leading\n', spacingAnalyze(), { unsafe: false });
    expect(r.text).toBe('a: trailing\nb: trailing\n');
    expect(r.applied.map((a) => a.rule)).toEqual(['toy-spacing', 'toy-spacing']);
    expect(r.remaining).toBe(0);
    // Idempotent: fixing the fixed text changes nothing.
    const again = fixText(r.text, spacingAnalyze(), { unsafe: false });
    expect(again.text).toBe(r.text);
    expect(again.applied).toEqual([]);
  });

  it('unsafe fixes only with the unsafe option; they are counted otherwise', () => {
    const safeOnly = fixText('a: leading\n', spacingAnalyze('unsafe'), { unsafe: false });
    expect(safeOnly.text).toBe('a: leading\n');
    expect(safeOnly.unsafeOnly).toBe(1);
    const withUnsafe = fixText('a: leading\n', spacingAnalyze('unsafe'), { unsafe: true });
    expect(withUnsafe.text).toBe('a: trailing\n');
    expect(withUnsafe.applied[0].safety).toBe('unsafe');
  });

  it('a fix overlapping one already chosen waits for the next round', () => {
    let rounds = 0;
    const analyze = (text: string) => {
      rounds++;
      const findings: Finding[] = [];
      // Two findings whose fixes edit the same word: only one can go per round.
      if (text.includes('x: 1')) {
        const at = text.indexOf('x: 1');
        findings.push(finding('first', [{ title: 'x=2', safety: 'safe', preferred: true, edits: [{ span: { start: at, end: at + 4 }, newText: 'x: 2' }] }]));
        findings.push(finding('second', [{ title: 'x=3', safety: 'safe', preferred: true, edits: [{ span: { start: at + 3, end: at + 4 }, newText: '3' }] }]));
      }
      return { parsed: parsedStub(text), findings };
    };
    const r = fixText('x: 1\n', analyze, { unsafe: false });
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
              { title: 'unsafe best', safety: 'unsafe', preferred: true, edits: [{ span: { start: 3, end: 4 }, newText: '9' }] },
              { title: 'safe other', safety: 'safe', preferred: false, edits: [{ span: { start: 3, end: 4 }, newText: '1' }] },
            ]),
          ]
        : [],
    });
    expect(fixText('v: 0', analyze, { unsafe: false }).text).toBe('v: 1');
    expect(fixText('v: 0', analyze, { unsafe: true }).text).toBe('v: 9');
  });

  it('a file that does not parse is returned untouched with the error', () => {
    const r = fixText('BROKEN leading', spacingAnalyze(), { unsafe: true });
    expect(r.text).toBe('BROKEN leading');
    expect(r.parseError?.message).toBe('broken');
    expect(r.applied).toEqual([]);
  });

  it('edits that would break the file are dropped', () => {
    const analyze = (text: string) => ({
      parsed: parsedStub(text, text.includes('BROKEN')),
      findings: text.includes('ok') ? [finding('breaker', [{ title: 'break', safety: 'safe', preferred: true, edits: [{ span: { start: 0, end: 2 }, newText: 'BROKEN' }] }])] : [],
    });
    const r = fixText('ok\n', analyze, { unsafe: false });
    expect(r.text).toBe('ok\n');
    expect(r.brokeText).toBe(true);
  });

  it('fixes that undo each other stop instead of cycling', () => {
    const analyze = (text: string) => ({
      parsed: parsedStub(text),
      findings: [
        finding('flip', [{ title: 'flip', safety: 'safe', preferred: true, edits: [{ span: { start: 0, end: 1 }, newText: text[0] === 'a' ? 'b' : 'a' }] }]),
      ],
    });
    const r = fixText('a', analyze, { unsafe: false, maxPasses: 5 });
    expect(r.text).toBe('b');
    expect(r.applied).toHaveLength(1);
  });
});
