/**
 * The consumer corpora (see corpus.ts): realistic files of every consumer family in the demo
 * scenario. Clean files are standard, correct configs: a false error or warning on one is the
 * worst bug this tool can have. Flawed files carry their exact findings and fixes, and every fix
 * is read back through the file's loader and consumer.
 */
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { applyFix, corpusFiles, expectationOf, findingsOf, loadSection } from './corpus';

const files = corpusFiles();
const clean = files.filter((f) => f.kind === 'clean');
const flawed = files.filter((f) => f.kind === 'flawed');

function changedKeys(before: Record<string, unknown>, after: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const key of new Set([...Object.keys(before), ...Object.keys(after)])) {
    const a = JSON.stringify(before[key] ?? null);
    const b = JSON.stringify(after[key] ?? null);
    if (a !== b) out[key] = key in after ? after[key] : null;
  }
  return out;
}

describe('consumer corpora', () => {
  it('has clean and flawed files for every family', () => {
    const families = new Set(files.map((f) => f.family));
    expect(families.size).toBeGreaterThanOrEqual(1);
    for (const family of families) {
      expect(
        clean.some((f) => f.family === family),
        `${family}: clean files`,
      ).toBe(true);
      expect(
        flawed.some((f) => f.family === family),
        `${family}: flawed files`,
      ).toBe(true);
    }
  });

  it.each(clean.map((f) => [`${f.family}/${f.name}`, f] as const))('clean %s: no error or warning, consumer recognised', (_name, file) => {
    const result = analyzeText(file.text, { path: file.path });
    const loud = result.findings.filter((x) => x.severity === 'error' || x.severity === 'warning');
    expect(loud.map((x) => `${x.rule}: ${x.message}`)).toEqual([]);
    expect(result.documents[0]!.setup.consumer?.decision.family).toBe(file.family);
    expect(result.isDiffusionConfig).toBe(true);
  });

  it.each(flawed.map((f) => [`${f.family}/${f.name}`, f] as const))('flawed %s: exact findings and fixes, read back by the loader', (_name, file) => {
    const expected = expectationOf(file);
    expect(expected, `${file.name} needs a .expected.json`).not.toBeNull();
    const result = analyzeText(file.text, { path: file.path });
    const decision = result.documents[0]!.setup.consumer!.decision;
    expect({ family: decision.family, className: decision.className, dialect: decision.dialect }).toEqual(expected!.decision);
    const findings = findingsOf(file);
    expect(findings.map((f) => `${f.rule}/${f.severity}`)).toEqual(expected!.findings.map((f) => `${f.rule}/${f.severity}`));
    const before = loadSection(file.text, file.path);
    expected!.findings.forEach((want, i) => {
      const got = findings[i]!;
      expect(file.text.slice(got.span.start, got.span.end)).toBe(want.text);
      for (const part of want.message) expect(got.message).toContain(part);
      expect(got.fixes.map((x) => x.title)).toEqual(want.fixes.map((x) => x.title));
      want.fixes.forEach((wantFix, k) => {
        const fixed = applyFix(file.text, got, k);
        const after = loadSection(fixed, file.path);
        // Exactly the intended change, as the loader reads it, and nothing else.
        const changed = changedKeys(before.values, after.values);
        // A long list is stated by its length and its ends (a rescaled beta list: the first beta is
        // unchanged and the last is exactly 1, Lin et al. 2023, Algorithm 1).
        for (const [key, want] of Object.entries(wantFix.changes)) {
          const got2 = changed[key];
          if (want && typeof want === 'object' && !Array.isArray(want) && Array.isArray(got2)) {
            changed[key] = { length: got2.length, first: got2[0], last: got2[got2.length - 1] };
          }
        }
        expect(changed).toEqual(wantFix.changes);
        // No key the consumer does not take.
        if (after.accepted) {
          const added = Object.keys(after.values).filter((k2) => !(k2 in before.values));
          expect(added.filter((k2) => !after.accepted!.has(k2))).toEqual([]);
        }
        // The finding is gone after its fix.
        const again = analyzeText(fixed, { path: file.path }).findings;
        expect(again.some((x) => x.rule === got.rule && x.severity === got.severity)).toBe(false);
      });
    });
  });
});
