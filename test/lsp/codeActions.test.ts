/**
 * Code actions hand out only fixes whose result parses: analysis renders fixes without parsing
 * each result (fix/render.ts), so the code-action layer parses the result of every fix it offers.
 * A fix that would break the text is planted next to the real ones of an analysed sample config.
 */
import { describe, expect, it } from 'vitest';
import type { CodeActionParams, Diagnostic } from 'vscode-languageserver-protocol';
import { analyzeText } from '../../server/src/engine/api';
import type { Finding, FixProposal } from '../../server/src/base/findings';
import { applyEdits } from '../../server/src/fix/apply';
import { fixAllAction, quickFixes, type CurrentFindings } from '../../server/src/lsp/codeActions';
import { findingToDiagnostic } from '../../server/src/lsp/convert';
import { parseText } from '../../server/src/parse';
import { LineIndex } from '../../server/src/parse/lineIndex';
import { editsFor } from './edits';
import { SAMPLE_LEADING } from './fixtures';

const uri = 'file:///lanternfish/preview-sampler.yaml';
const mapper = new LineIndex(SAMPLE_LEADING);

/** The sample's findings, with a sampling-only fix planted on the spacing finding that opens a flow list it never closes. */
function current(): { current: CurrentFindings; broken: FixProposal; skip: Finding } {
  const findings = analyzeText(SAMPLE_LEADING, { path: 'preview-sampler.yaml' }).findings;
  const skip = findings.find((f) => f.rule === 'sampler-skips-last-step');
  if (!skip) throw new Error('the sample has no sampler-skips-last-step finding');
  const at = SAMPLE_LEADING.indexOf('leading');
  const broken: FixProposal = {
    title: 'Write "[trailing"',
    effect: 'sampling-only',
    touchesComment: false,
    preferred: false,
    edits: [{ span: { start: at, end: at + 'leading'.length }, newText: '[trailing' }],
  };
  skip.fixes.push(broken);
  return { current: { uri, version: 3, text: SAMPLE_LEADING, mapper, findings }, broken, skip };
}

function diagnosticOf(finding: Finding): Diagnostic {
  return findingToDiagnostic(finding, { mapper, version: 3, docsUrl: () => null, otherFile: () => null }, uri);
}

function params(diagnostics: Diagnostic[]): CodeActionParams {
  return { textDocument: { uri }, range: diagnostics[0]!.range, context: { diagnostics } };
}

const syntaxErrors = (text: string) => parseText(text, 'yaml').problems.filter((p) => p.severity === 'error');

describe('code actions parse the result of what they hand out', () => {
  it('the planted fix really breaks the text (so the tests below can fail)', () => {
    const { broken } = current();
    expect(syntaxErrors(applyEdits(SAMPLE_LEADING, broken.edits)).length).toBeGreaterThan(0);
    expect(syntaxErrors(SAMPLE_LEADING)).toEqual([]);
  });

  it('a quick fix whose result would not parse is not offered; the others are', () => {
    const { current: cur, skip } = current();
    const actions = quickFixes(params([diagnosticOf(skip)]), cur, true);
    expect(actions.map((a) => a.title)).toEqual(['Set the timestep spacing to trailing (sampling only)']);
    const fixed = applyEdits(
      SAMPLE_LEADING,
      editsFor(actions[0]!.edit, uri).map((e) => ({
        span: { start: mapper.offsetAt(e.range.start), end: mapper.offsetAt(e.range.end) },
        newText: e.newText,
      })),
    );
    expect(fixed).toContain('  timestep_spacing: trailing\n');
    expect(syntaxErrors(fixed)).toEqual([]);
  });

  it('the same holds for fixes read back from a diagnostic whose range no longer matches a finding', () => {
    const { current: cur, skip } = current();
    const diagnostic = diagnosticOf(skip);
    // Another range: the fixes come from the diagnostic's data (same version), not from the finding.
    diagnostic.range = { start: { line: 0, character: 0 }, end: { line: 0, character: 1 } };
    const actions = quickFixes(params([diagnostic]), cur, true);
    expect(actions.map((a) => a.title)).toEqual(['Set the timestep spacing to trailing (sampling only)']);
  });

  it('fix-all leaves a breaking sampling-only fix out and still applies the good ones', () => {
    const { current: cur, skip } = current();
    // Make the breaking fix the one fix-all would pick for the finding.
    skip.fixes.forEach((f) => (f.preferred = f.title.startsWith('Write "[')));
    const action = fixAllAction(cur, false);
    expect(action).not.toBeNull();
    const edits = editsFor(action!.edit, uri);
    const fixed = applyEdits(
      SAMPLE_LEADING,
      edits.map((e) => ({ span: { start: mapper.offsetAt(e.range.start), end: mapper.offsetAt(e.range.end) }, newText: e.newText })),
    );
    expect(fixed).toContain('  timestep_spacing: trailing\n');
    expect(fixed).not.toContain('[trailing');
    expect(syntaxErrors(fixed)).toEqual([]);
  });

  it('fix-all offers nothing when the only sampling-only fix would break the text', () => {
    const { current: cur, skip } = current();
    skip.fixes = skip.fixes.filter((f) => f.title.startsWith('Write "['));
    expect(fixAllAction(cur, false)).toBeNull();
  });
});
